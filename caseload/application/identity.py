"""Who is acting: the staff member mapped to the OS account, or, for an admin's account, `--as`.

The rule: every OS account maps to at most one staff record. An account mapped to an active
admin may act as any active staff member (`--as STAFF`), for example to enter a colleague's call
notes or to run scripted jobs; any other account acts only as itself. Every write records both
the staff member and the OS account.
"""

from __future__ import annotations

import os
import pwd

from caseload.core.model import Actor, Role
from caseload.application.errors import NotFound, Refused
from caseload.store import Store


def os_account() -> str:
    """The account the process runs under, from the OS itself: USER and LOGNAME can be set by anyone."""
    uid = os.geteuid()
    try:
        return pwd.getpwuid(uid).pw_name
    except KeyError:  # a uid with no passwd entry (some containers)
        return f"uid-{uid}"


def not_mapped(account: str) -> Refused:
    return Refused(
        f"OS account '{account}' is not mapped to a staff member: ask an admin to run "
        f"'caseload staff map STAFF {account}'"
    )


def resolve_actor(store: Store, account: str, as_staff: str | None = None) -> Actor:
    """The acting staff member for this OS account, or a one-line refusal."""
    own = store.staff.by_os_account(account)
    if own is None:
        raise not_mapped(account)
    if not own.active:
        raise Refused(f"staff member {own.id} is inactive and can do nothing: ask an admin")
    if as_staff is None or as_staff == own.id:
        return Actor(own, account)
    if own.role is not Role.ADMIN:
        raise Refused(f"--as is honoured only for an admin's OS account; '{account}' is {own.id} ({own.role.value})")
    other = store.staff.get(as_staff)
    if other is None:
        raise NotFound(f"no staff member '{as_staff}': see 'caseload staff list'")
    if not other.active:
        raise Refused(f"staff member {other.id} is inactive and can do nothing")
    return Actor(other, account)
