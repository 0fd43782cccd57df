"""Commands for the store itself: setting it up, backup, restore, check."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic, Identity
from caseload.application.errors import NotAStore, StoreDamaged, StoreError
from caseload.application.staff import DEFAULT_TIMEZONE
from caseload.application.store_care import Report
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
    click.echo(f"Store created at {printable(path)}; admin {actor.id} is mapped to OS account "
               f"'{printable(actor.os_account)}'.")


@click.command()
@click.argument("path", type=click.Path(dir_okay=False))
@pass_clinic
def backup(clinic: Clinic, path: str) -> None:
    """Copy the store to PATH while others keep working (admins only)."""
    clinic.backup(path)
    click.echo(f"Backup written to {printable(path)} (owner-only).")


@click.command()
@click.argument("path", type=click.Path(exists=True, dir_okay=False))
@click.option("--force", is_flag=True, help="Restore even though the store holds data the backup lacks.")
@pass_options
def restore(options: GlobalOptions, path: str, force: bool) -> None:
    """Replace the store with a backup, after verifying it as check does (admins only; over a store
    that cannot be opened, its admins if they can still be read, else the host's owner of the store).

    The replaced store is kept beside it as STORE.replaced-DATE (owner-only)."""
    try:
        clinic = options.open_clinic()
        clinic.refuse_damaged()  # opening does not check: the restore first reads the store to compare it
    except (StoreDamaged, NotAStore):  # nothing to compare with: replaced whole, and kept beside it
        if options.clinic is not None:
            options.clinic.close()  # the damaged file is replaced under its name: no connection may stay on it
        done = Clinic.restore_damaged(options.path, path, Identity.from_os(options.as_staff), options.date_of_record)
    else:
        done = clinic.restore(path, force)
    click.echo(f"Restored from {printable(path)} (schema {done.version}); the replaced store is kept as "
               f"{printable(str(done.kept))}.")
    if done.loss and done.loss.audit_rows:
        click.echo(f"Replaced, not in the backup: {done.loss.describe()}.")


@click.command()
@click.option("--recompute", is_flag=True,
              help="Also throw away the kept results of completed cycles and recompute every patient from every "
                   "entry, saying whose results differed (none should).")
@pass_options
def check(options: GlobalOptions, recompute: bool) -> None:
    """Verify the store: SQLite integrity, references, the audit chain, the triggers and schema caseload
    makes, and every record against its audit row. Exit 1 when anything is wrong."""
    try:
        clinic = options.open_clinic()
    except StoreError:  # damaged or altered past opening: the report says how
        report = Clinic.check_damaged(options.path)
    else:
        report = clinic.check()
    for line in report_lines(report):
        click.echo(printable(line))
    if not report.ok:
        click.echo(printable(f"caseload: the store {report.first_problem()}: see the lines above; restore a "
                             "backup that passes ('caseload restore FILE')"), err=True)
        raise click.exceptions.Exit(1)
    if recompute:
        _recompute(clinic)


def _recompute(clinic: Clinic) -> None:
    """`check --recompute`: one line for the recompute, one per patient whose kept results differed."""
    done = clinic.recompute()
    click.echo(f"recomputed from every entry: {done.patients} patients, {done.kept_dropped} kept cycles replaced; "
               f"differences: {len(done.differences) or 'none'}")
    for line in done.differences:
        click.echo(printable(f"  differed: {line}"))
    if done.differences:
        click.echo("caseload: kept results differed from every entry's for the patients above: they are "
                   "recomputed now; keep this output for the developers", err=True)
        raise click.exceptions.Exit(1)


# SQLite's integrity check can list a hundred findings, most of them echoes of the first: a few say
# which pages are damaged, and the rest are counted.
INTEGRITY_SHOWN = 3


def report_lines(r: Report) -> list[str]:
    """The check's findings, one topic a line, each problem named (which rows, which trigger)."""
    if r.integrity != ("ok",):
        first, *others = r.integrity
        more = len(others) - (INTEGRITY_SHOWN - 1)
        return [f"integrity: {first}", *(f"  also: {finding}" for finding in others[:INTEGRITY_SHOWN - 1]),
                *([f"  and {more} more {'finding' if more == 1 else 'findings'} of SQLite's integrity check"]
                  if more > 0 else []),
                f"schema version: {r.schema_version}",
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


COMMANDS = [init, backup, restore, check]
