"""Entries: `log`, `import`, `entries`, `amend` and `void`."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic
from caseload.application.csv_import import read_csv_file
from caseload.cli.global_options import echo_json, pass_clinic
from caseload.cli.printing import entries_table
from caseload.core.model import Kind
from caseload.presentation import json_shapes
from caseload.presentation.glossary import refreshed_line
from caseload.presentation.safe_text import printable

KIND_HELP = "KIND is one of: " + ", ".join(k.value for k in Kind) + "."


@click.command(epilog=KIND_HELP)
@click.argument("patient_id", metavar="PATIENT")
@click.argument("kind", metavar="KIND")
@click.argument("value")
@click.option("--on", "on", default="today", show_default=True, help="Day: YYYY-MM-DD, today, yesterday or -N.")
@click.option("--at", "at", metavar="HH:MM", help="Time of the reading.")
@click.option("--flag", "flags", multiple=True, help="Disturbance (illness, poor-sleep, alcohol, late, other) or midcycle.")
@click.option("--note", default="", help="Free-text note.")
@pass_clinic
def log(clinic: Clinic, patient_id, kind, value, on, at, flags, note) -> None:
    """Log one entry for a patient: 'caseload log P0001 temp 36.72', 'caseload log P0001 bleed heavy --on yesterday'."""
    done = clinic.log(patient_id, kind, value, on, at, flags, note)
    e = done.entry
    click.echo(f"Logged entry {e.id}: {e.patient_id} {e.kind.value} {printable(e.value.display())} on "
               f"{e.day.isoformat()}. {refreshed_line(done.refreshed)}")


@click.command("import")
@click.argument("file")  # not click's existence check: through a sudo rule it would run as the service
@pass_clinic
def import_(clinic: Clinic, file: str) -> None:
    """Import entries from CSV (patient,day,kind,value[,time,flags,note,correction]): all rows or none.

    Rows identical to entries already logged are skipped unless their correction column says yes."""
    done = clinic.import_csv(read_csv_file(file))
    skipped = f" {done.skipped} rows skipped as already logged." if done.skipped else ""
    click.echo(f"Imported {done.rows} entries for {done.patients} patients.{skipped}")


@click.command()
@click.argument("patient_id", metavar="PATIENT")
@click.option("--json", "as_json", is_flag=True)
@pass_clinic
def entries(clinic: Clinic, patient_id: str, as_json: bool) -> None:
    """The patient's entries with their ids; corrections and voids shown."""
    rows = clinic.entries(patient_id)
    if as_json:
        echo_json([json_shapes.entry(e) for e in rows])
    else:
        entries_table(rows)


@click.command()
@click.argument("entry_id")
@click.argument("value")
@click.option("--reason", required=True, help="Why the entry is corrected.")
@pass_clinic
def amend(clinic: Clinic, entry_id: str, value: str, reason: str) -> None:
    """Correct an entry: a new entry supersedes it; the old one stays, struck through."""
    done = clinic.amend(entry_id, value, reason)
    click.echo(f"Entry {done.entry.id} supersedes entry {entry_id}. {refreshed_line(done.refreshed)}")


@click.command()
@click.argument("entry_id")
@click.option("--reason", required=True, help="Why the entry does not count.")
@pass_clinic
def void(clinic: Clinic, entry_id: str, reason: str) -> None:
    """Void an entry: it stays on record with the reason, and no longer counts."""
    done = clinic.void(entry_id, reason)
    click.echo(f"Entry {done.entry.id} is void. {refreshed_line(done.refreshed)}")


COMMANDS = [log, import_, entries, amend, void]
