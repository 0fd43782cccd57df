"""What the interface needs before anyone is signed in: who may sign in from an unmapped account."""

from __future__ import annotations

from caseload.core.model import Staff
from caseload.store import Store


def needs_sign_in(store: Store, account: str) -> bool:
    """True when no staff record is mapped to this OS account yet."""
    return store.staff.by_os_account(account) is None


def sign_in_roster(store: Store) -> list[Staff]:
    """The active staff, for the first sign-in screen (those already mapped are shown, not offered)."""
    return [s for s in store.staff.all() if s.active]
