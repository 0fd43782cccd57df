"""Commands for keeping the store safe: backup, restore, check, and the clinic protocol."""

from __future__ import annotations

import click

from caseload.cli.session import Session, pass_session, printable
from caseload.application import store_care as maintenance


@click.command()
@click.argument("path", type=click.Path(dir_okay=False))
@pass_session
def backup(session: Session, path: str) -> None:
    """Copy the store to PATH while others keep working (admins only)."""
    maintenance.backup(session.context(), path)
    click.echo(f"Backup written to {printable(path)} (owner-only).")


@click.command()
@click.argument("path", type=click.Path(exists=True, dir_okay=False))
@pass_session
def restore(session: Session, path: str) -> None:
    """Replace the store with a backup, after checking its integrity and schema (admins only)."""
    version = maintenance.restore(session.context(), path)
    click.echo(f"Restored from {printable(path)} (schema {version}).")


@click.command()
@pass_session
def check(session: Session) -> None:
    """Check the store: SQLite integrity, references, audit trail ids without gaps."""
    h = maintenance.check(session.context())
    click.echo(f"integrity: {', '.join(h.integrity)}")
    click.echo(f"broken references: {h.foreign_keys}")
    gaps = ", ".join(f"{a}-{b}" for a, b in h.audit_gaps) or "none"
    click.echo(f"audit id gaps: {gaps}")
    click.echo(f"schema version: {h.schema_version}")
    if not h.ok:
        raise click.exceptions.Exit(1)


COMMANDS = [backup, restore, check]
