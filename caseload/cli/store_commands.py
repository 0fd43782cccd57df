"""Commands for keeping the store safe: backup, restore, check, and the clinic protocol."""

from __future__ import annotations

import click

from caseload.cli.session import Session, pass_session, printable
from caseload.application import store_care as maintenance
from caseload.application.identity import os_account
from caseload.store import Report, StoreDamaged, StoreError


@click.command()
@click.argument("path", type=click.Path(dir_okay=False))
@pass_session
def backup(session: Session, path: str) -> None:
    """Copy the store to PATH while others keep working (admins only)."""
    maintenance.backup(session.context(), path)
    click.echo(f"Backup written to {printable(path)} (owner-only).")


@click.command()
@click.argument("path", type=click.Path(exists=True, dir_okay=False))
@click.option("--force", is_flag=True, help="Restore even though the store holds data the backup lacks.")
@pass_session
def restore(session: Session, path: str, force: bool) -> None:
    """Replace the store with a backup, after verifying it as check does (admins only).

    The replaced store is kept beside it as STORE.replaced-DATE (owner-only)."""
    try:
        done = maintenance.restore(session.context(), path, force)
    except StoreDamaged:
        done = maintenance.restore_damaged(session.path, path, os_account(), session.as_staff)
    click.echo(f"Restored from {printable(path)} (schema {done.version}); the replaced store is kept as "
               f"{printable(str(done.kept))}.")
    if done.loss and done.loss.audit_rows:
        click.echo(f"Replaced, not in the backup: {done.loss.describe()}.")


@click.command()
@pass_session
def check(session: Session) -> None:
    """Verify the store: SQLite integrity, references, the audit chain, the triggers and schema caseload
    makes, and every record against its audit row. Exit 1 when anything is wrong."""
    try:
        report = maintenance.check(session.context())
    except StoreError:  # damaged or altered past opening: the report says how
        report = maintenance.check_damaged(session.path)
    for line in report_lines(report):
        click.echo(printable(line))
    if not report.ok:
        click.echo(printable(f"caseload: the store {report.first_problem()}: see the lines above; restore a "
                             "backup that passes ('caseload restore FILE')"), err=True)
        raise click.exceptions.Exit(1)


def report_lines(r: Report) -> list[str]:
    """The check's findings, one topic a line, each problem named (which rows, which trigger)."""
    if r.integrity != ("ok",):
        return [f"integrity: {'; '.join(r.integrity)}", f"schema version: {r.schema_version}",
                "nothing else checked: the file is damaged; restore a backup with 'caseload restore FILE'"]
    if r.schema:
        return ["integrity: ok", f"schema version: {r.schema_version}; " + "; ".join(r.schema),
                f"triggers: {'; '.join(r.triggers) or 'all present and unchanged'}",
                "nothing else checked: the tables are not the ones caseload makes"]
    head = f", newest hash {r.audit_head[:16]}" if r.audit_head else ""
    return [
        "integrity: ok",
        f"broken references: {r.foreign_keys}",
        f"audit id gaps: {', '.join(f'{a}-{b}' for a, b in r.audit_gaps) or 'none'}",
        f"audit chain: {r.audit_rows} rows{head}; " + (
            f"broken at rows {', '.join(map(str, r.chain_breaks))}" if r.chain_breaks else "unbroken"),
        f"triggers: {'; '.join(r.triggers) or 'all present and unchanged'}",
        f"schema version: {r.schema_version}; " + ('; '.join(r.schema) or "matches it"),
        f"records against their audit rows: {'; '.join(r.unaudited) or 'all agree'}",
    ]


COMMANDS = [backup, restore, check]
