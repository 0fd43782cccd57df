"""Commands for the store itself: setting it up, backup, restore, check."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic, Identity
from caseload.application.staff import DEFAULT_TIMEZONE
from caseload.cli.global_options import GlobalOptions, pass_clinic, pass_options
from caseload.core.parse import InputError
from caseload.presentation.safe_text import printable


@click.command()
@click.option("--admin", "admin_id", required=True, help="Id of the first admin (mapped to your OS account).")
@click.option("--name", required=True, help="The admin's full name.")
@click.option("--timezone", default=DEFAULT_TIMEZONE, show_default=True, help="The clinic's time zone.")
@pass_options
def init(options: GlobalOptions, admin_id: str, name: str, timezone: str) -> None:
    """Create a new store with its first admin."""
    path = options.path
    if path.exists() and path.stat().st_size:
        raise InputError(f"{path} exists already: choose another --db path")
    actor = Clinic.create(path, Identity.from_os(), admin_id, name, timezone, date_of_record=options.date_of_record)
    click.echo(f"Store created at {path}; admin {actor.id} is mapped to OS account '{actor.os_account}'.")


@click.command()
@click.argument("path", type=click.Path(dir_okay=False))
@pass_clinic
def backup(clinic: Clinic, path: str) -> None:
    """Copy the store to PATH while others keep working (admins only)."""
    clinic.backup(path)
    click.echo(f"Backup written to {printable(path)} (owner-only).")


@click.command()
@click.argument("path", type=click.Path(exists=True, dir_okay=False))
@pass_clinic
def restore(clinic: Clinic, path: str) -> None:
    """Replace the store with a backup, after checking its integrity and schema (admins only)."""
    version = clinic.restore(path)
    click.echo(f"Restored from {printable(path)} (schema {version}).")


@click.command()
@pass_clinic
def check(clinic: Clinic) -> None:
    """Check the store: SQLite integrity, references, audit trail ids without gaps."""
    h = clinic.check()
    click.echo(f"integrity: {', '.join(h.integrity)}")
    click.echo(f"broken references: {h.foreign_keys}")
    gaps = ", ".join(f"{a}-{b}" for a, b in h.audit_gaps) or "none"
    click.echo(f"audit id gaps: {gaps}")
    click.echo(f"schema version: {h.schema_version}")
    if not h.ok:
        raise click.exceptions.Exit(1)


COMMANDS = [init, backup, restore, check]
