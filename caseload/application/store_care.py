"""Backups, restores and checks of the store (admins; supervisors may check)."""

from __future__ import annotations

from datetime import date
from pathlib import Path

from caseload.application.context import Context, require
from caseload.application.identity import resolve_actor
from caseload.application.staff import clinic_today
from caseload.store import Report, Store
from caseload.store.backup_restore import Restored, check_file, replace_damaged, verified_copy


def backup(ctx: Context, target: str) -> Path:
    ctx.require("store.backup")
    path = Path(target)
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
    """Restore over a store too damaged to open. The damaged store cannot say who may do it, so the
    verified backup does: the account must map to one of its admins. The damaged file is kept."""
    with verified_copy(path, Path(source)) as (stage, version):
        with Store(stage) as staged:
            actor = resolve_actor(staged, account, as_staff)
            require(actor, "store.restore")
            now = staged.db.clock()
        kept = replace_damaged(path, stage, now)
    with Store(path) as store:
        record = {"path": source, "schema": version, "kept": str(kept), "replaced_damaged": True}
        with store.atomic(date_of_record or clinic_today(store)):
            store.audit.record(actor, "store.restore", "store", None, after=record)
    return Restored(version, kept, None)


def check(ctx: Context) -> Report:
    ctx.require("store.check")
    return ctx.store.check()


def check_damaged(path: Path) -> Report:
    """The report on a store too damaged or altered to open: nothing in it can say who may read it,
    and the report names only row ids, schema objects and SQLite's findings."""
    return check_file(path)
