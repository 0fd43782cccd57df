"""What the interface needs before anyone is signed in: whether this OS account is mapped yet."""

from __future__ import annotations

from caseload.core.model import Actor
from caseload.application.identity import resolve_actor
from caseload.store import Store


def needs_sign_in(store: Store, account: str) -> bool:
    """True when no staff record is mapped to this OS account yet."""
    return store.staff.by_os_account(account) is None


def mapped_actor(store: Store, account: str) -> Actor | None:
    """The account's staff member once an admin has mapped it, else None (nothing is taken or claimed)."""
    return None if needs_sign_in(store, account) else resolve_actor(store, account)
