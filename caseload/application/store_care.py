"""Backups, restores and health checks of the store (admins; supervisors may check)."""

from __future__ import annotations

from pathlib import Path

from caseload.application.context import Context
from caseload.store.backup_restore import Health


def backup(ctx: Context, target: str) -> Path:
    ctx.require("store.backup")
    path = Path(target)
    ctx.store.backup(path)
    with ctx.store.atomic(ctx.today):
        ctx.store.audit.record(ctx.actor, "store.backup", "store", None, after={"path": str(path)})
    return path


def restore(ctx: Context, source: str) -> int:
    """Replace the store with a checked backup; the restore itself is audited in the restored store."""
    ctx.require("store.restore")
    last_before = ctx.store.audit.last_id()
    version = ctx.store.restore(Path(source))
    record = {"path": source, "schema": version}
    last_restored = ctx.store.audit.last_id()
    if last_before > last_restored:
        # Audit rows written after the backup was taken are gone with the replaced file; name their ids,
        # since the ids that follow will be issued again.
        record["audit_ids_replaced"] = [last_restored + 1, last_before]
    with ctx.store.atomic(ctx.today):
        ctx.store.audit.record(ctx.actor, "store.restore", "store", None, after=record)
    return version


def check(ctx: Context) -> Health:
    ctx.require("store.check")
    return ctx.store.health()
