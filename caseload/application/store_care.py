"""Backups, restores and checks of the store (admins; supervisors may check)."""

from __future__ import annotations

from datetime import date
from pathlib import Path

from caseload.core.model import Actor, Role, Staff
from caseload.application.context import Context, require
from caseload.application.errors import Refused
from caseload.application.identity import actor_among, host_owners
from caseload.application.safe_file import is_store_file
from caseload.application.staff import clinic_today
from caseload.store import Report, Store
from caseload.store.backup_restore import Restored, check_file, replace_damaged, staff_of_unopenable, verified_copy
from caseload.store.db import utc_now

# The audit row of a restore authorised by owning the file on the host rather than by a staff record:
# no staff id can be this (ids start with a letter or digit), so it is never taken for one.
HOST_OWNER = "(host owner)"


def backup(ctx: Context, target: str) -> Path:
    ctx.require("store.backup")
    path = Path(target)
    if is_store_file(path, ctx.store.path):
        raise Refused(f"{path} is the store's own file: a backup goes to a file of its own, choose another path")
    ctx.store.backup(path)
    with ctx.store.atomic(ctx.today):
        ctx.store.audit.record(ctx.actor, "store.backup", "store", None, after={"path": str(path)})
    return path


def restore(ctx: Context, source: str, force: bool = False) -> Restored:
    """Replace the store with a verified backup; the restore itself is audited in the restored store,
    with what the replaced store held that the backup lacked."""
    ctx.require("store.restore")
    last_before = ctx.store.audit.last_id()
    done = ctx.store.restore(Path(source), force)
    record = {"path": source, "schema": done.version, "kept": str(done.kept), "audit_rows_lost": done.loss.audit_rows}
    last_restored = ctx.store.audit.last_id()
    if last_before > last_restored:
        # Audit rows written after the backup was taken are gone with the replaced file; name their ids,
        # since the ids that follow will be issued again.
        record["audit_ids_replaced"] = [last_restored + 1, last_before]
    with ctx.store.atomic(ctx.today):
        ctx.store.audit.record(ctx.actor, "store.restore", "store", None, after=record)
    return done


def restore_damaged(path: Path, source: str, account: str, as_staff: str | None,
                    date_of_record: date | None = None) -> Restored:
    """Restore over a store that cannot be opened (damaged, not a database, empty, or not a caseload
    store); the file it replaces is kept beside it byte for byte.

    Who may: an active admin of the damaged store itself, while SQLite can still read its staff (the
    account must map to one, `--as` as anywhere); and, whether or not they can be read, the host's
    owner of the store (`identity.host_owners`: root, the account the file belongs to, or through a
    shared host's sudo rule an admin account named by `host setup --admin-account`), who could
    replace the file anyway. Never the backup's staff: whoever wrote the backup may have made
    herself its admin. Refused before anything is read from the backup or written."""
    actor = _restorer(path, account, as_staff)
    with verified_copy(path, Path(source)) as (stage, version):
        kept = replace_damaged(path, stage, utc_now())
    with Store(path) as store:
        record = {"path": source, "schema": version, "kept": str(kept), "replaced_damaged": True}
        with store.atomic(date_of_record or clinic_today(store)):
            store.audit.record(actor, "store.restore", "store", None, after=record)
    return Restored(version, kept, None)


def _restorer(path: Path, account: str, as_staff: str | None) -> Actor:
    """Who restores over the store at `path`, by the rule in `restore_damaged`, or a refusal naming who may."""
    owners = host_owners(path)
    staff = staff_of_unopenable(path)
    refusal = None
    if staff is not None:
        try:
            actor = actor_among(_Roster(staff), account, as_staff)
            require(actor, "store.restore")
            return actor
        except Refused as err:
            refusal = err
    if account in owners:
        # The host's owner acts as itself: `--as` names a staff member, whom only the store's staff vouch for.
        if as_staff is None:
            return Actor(Staff(HOST_OWNER, "the host's owner of the store", Role.ADMIN, True, account), account)
        if refusal is None:
            raise Refused(f"{path} is too damaged to say who its staff are, so --as cannot be honoured: "
                          "run the restore without it")
    who = f"the host's owner of it ({', '.join(owners)})"
    if refusal is None:
        raise Refused(f"{path} is too damaged to say who its admins are, so only {who} may restore over it; "
                      f"'{account}' is not: ask one of them")
    raise Refused(f"{refusal}; over a damaged store only its own admins or {who} may restore")


class _Roster:
    """Staff records read from a damaged file, looked up as a store's staff table is."""

    def __init__(self, staff: list[Staff]):
        self.staff = staff

    def get(self, staff_id: str) -> Staff | None:
        return next((s for s in self.staff if s.id == staff_id), None)

    def by_os_account(self, account: str) -> Staff | None:
        return next((s for s in self.staff if s.os_account == account), None)


def check(ctx: Context) -> Report:
    ctx.require("store.check")
    return ctx.store.check()


def check_damaged(path: Path) -> Report:
    """The report on a store too damaged or altered to open: nothing in it can say who may read it,
    and the report names only row ids, schema objects and SQLite's findings."""
    return check_file(path)
