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
from typing import Protocol

from caseload.core.model import Actor, Role, Staff
from caseload.application.errors import NotFound, Refused
from caseload.store import Store

SERVICES_DIR = Path("/etc/caseload/services")


@dataclass(frozen=True)
class Service:
    """A service account of this host: the store it owns, the group whose members may use it, and the
    accounts of the host's own caseload admins (`host setup --admin-account`)."""

    account: str
    store: Path
    group: str
    admins: tuple[str, ...] = ()


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
        admins = data.get("admins", [])
        if not (isinstance(admins, list) and all(isinstance(a, str) for a in admins)):
            admins = []  # names no one, rather than misreading them
        return Service(account, Path(data["store"]), data["group"], tuple(admins))
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
    caller = sudo_caller()
    return caller.account if caller is not None else _account_name(os.geteuid())


@dataclass(frozen=True)
class Caller:
    """The staff member's own account behind a service's sudo rule: what the kernel would let her
    read is judged by her uid and every group she is in, not by the service account's."""

    account: str
    uid: int
    gids: frozenset[int]


def sudo_caller() -> Caller | None:
    """The account this process acts for when it runs as a service through sudo; None when it runs
    as the account it acts for (the kernel then checks every file it opens)."""
    if service(_account_name(os.geteuid())) is None:
        return None
    name = _sudo_invoker()
    if name is None:
        return None
    entry = pwd.getpwnam(name)
    return Caller(name, entry.pw_uid, frozenset(os.getgrouplist(name, entry.pw_gid)))


def host_owners(store: Path) -> list[str]:
    """The OS accounts that own the store at `store` on this host, whatever the file says inside:
    root; the account the file belongs to (one person's own store, or a shared host's service
    account itself, as in a cron job); and, through a shared host's sudo rule, the admin accounts
    root's service file names. The first two could replace the file anyway; the others are root's
    word, in a file only root may write (see `service`)."""
    owners = ["root"]
    try:
        owners.append(_account_name(store.stat().st_uid))
    except OSError:
        pass
    svc = running_service()
    if svc is not None and svc.store.resolve() == store.resolve():
        owners += svc.admins
    return list(dict.fromkeys(owners))


def not_mapped(account: str) -> Refused:
    return Refused(
        f"OS account '{account}' is not mapped to a staff member: ask an admin to run "
        f"'caseload staff map STAFF {account}'"
    )


class StaffLookup(Protocol):
    """Staff records by id and by OS account: a store's staff table, or the staff read from a damaged file."""

    def get(self, staff_id: str) -> Staff | None: ...

    def by_os_account(self, account: str) -> Staff | None: ...


def resolve_actor(store: Store, account: str, as_staff: str | None = None) -> Actor:
    """The acting staff member for this OS account, or a one-line refusal."""
    return actor_among(store.staff, account, as_staff)


def actor_among(staff: StaffLookup, account: str, as_staff: str | None = None) -> Actor:
    """The acting staff member among `staff` for this OS account (see the rule above), or a refusal."""
    own = staff.by_os_account(account)
    if own is None:
        raise not_mapped(account)
    if not own.active:
        raise Refused(f"staff member {own.id} is inactive and can do nothing: ask an admin")
    if as_staff is None or as_staff == own.id:
        return Actor(own, account)
    if own.role is not Role.ADMIN:
        raise Refused(f"--as is honoured only for an admin's OS account; '{account}' is {own.id} ({own.role.value})")
    other = staff.get(as_staff)
    if other is None:
        raise NotFound(f"no staff member '{as_staff}': see 'caseload staff list'")
    if not other.active:
        raise Refused(f"staff member {other.id} is inactive and can do nothing")
    return Actor(other, account)
