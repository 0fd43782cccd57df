"""Who is acting: the staff member mapped to the OS account, or, for an admin's account, `--as`.

The rule: every OS account maps to at most one staff record. An account mapped to an active
admin may act as any active staff member (`--as STAFF`), for example to enter a colleague's call
notes or to run scripted jobs; any other account acts only as itself. Every write records both
the staff member and the OS account.

The OS account comes from a trusted source only, never from USER or LOGNAME. On a shared host
the store belongs to a service account and staff run caseload as that account through a sudo
rule (`caseload host setup`); root's file `/etc/caseload/services/ACCOUNT.toml` says which
accounts are such services. A process running as a service account and started by sudo acts for
SUDO_USER: sudo sets it, and no one can run as the service account except through sudo. Any
other process acts for the account it runs under, from the password database.
"""

from __future__ import annotations

import os
import pwd
import stat
import tomllib
from dataclasses import dataclass
from pathlib import Path

from caseload.core.model import Actor, Role
from caseload.application.errors import NotFound, Refused
from caseload.store import Store

SERVICES_DIR = Path("/etc/caseload/services")


@dataclass(frozen=True)
class Service:
    """A service account of this host: the store it owns and the group whose members may use it."""

    account: str
    store: Path
    group: str


def service_file(account: str) -> Path:
    return SERVICES_DIR / f"{account}.toml"


def _account_name(uid: int) -> str:
    try:
        return pwd.getpwuid(uid).pw_name
    except KeyError:  # a uid with no passwd entry (some containers)
        return f"uid-{uid}"


def service(account: str) -> Service | None:
    """The service this account runs, if root's configuration says it is one.

    A file anyone but root could have written is ignored: it would let its writer decide who acts.
    """
    path = service_file(account)
    try:
        info = path.stat()
        if info.st_uid != 0 or info.st_mode & (stat.S_IWGRP | stat.S_IWOTH) or not stat.S_ISREG(info.st_mode):
            return None
        data = tomllib.loads(path.read_text(encoding="utf-8"))
        return Service(account, Path(data["store"]), data["group"])
    except (OSError, ValueError, KeyError, TypeError):
        return None


def running_service() -> Service | None:
    """The service this process runs as, or None for a process of an ordinary account."""
    return service(_account_name(os.geteuid()))


def service_store(requested: Path | None) -> Path | None:
    """Through a service, its own store (None for an ordinary account): no other file is opened
    as the service account, so a staff member cannot point it at a file of her choosing."""
    svc = running_service()
    if svc is None:
        return None
    if requested is not None and requested.resolve() != svc.store.resolve():
        raise Refused("this host's caseload uses its one store: run it without --db or CASELOAD_DB")
    return svc.store


def _sudo_invoker() -> str | None:
    """The account that started this process through sudo, when sudo's two variables agree."""
    name, uid = os.environ.get("SUDO_USER"), os.environ.get("SUDO_UID")
    if not name or not uid or not uid.isdigit():
        return None
    try:
        return name if pwd.getpwnam(name).pw_uid == int(uid) else None
    except KeyError:
        return None


def os_account() -> str:
    """The account acting: through the service's sudo rule the staff member who ran it, else the
    account the process runs under. USER and LOGNAME are never read: anyone can set them."""
    own = _account_name(os.geteuid())
    if service(own) is not None:
        invoker = _sudo_invoker()
        if invoker is not None:
            return invoker
    return own


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
