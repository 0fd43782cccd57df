"""Commands for the records themselves: set-up, staff, patients, entries, and reading them back."""

from __future__ import annotations

from pathlib import Path

import click

from caseload.cli.session import Session, echo_json, pass_session, printable
from caseload.cli.text_views import entries_table, entry_json, list_table, print_table
from caseload.core.model import Kind
from caseload.core.parse import InputError
from caseload.application import caseload_view as caseload_service
from caseload.application import entries as entry_service
from caseload.application import csv_import as importer
from caseload.application import patients
from caseload.application import staff
from caseload.application.identity import os_account

KIND_HELP = "KIND is one of: " + ", ".join(k.value for k in Kind) + "."


@click.command()
@click.option("--admin", "admin_id", required=True, help="Id of the first admin (mapped to your OS account).")
@click.option("--name", required=True, help="The admin's full name.")
@click.option("--timezone", default=staff.DEFAULT_TIMEZONE, show_default=True, help="The clinic's time zone.")
@pass_session
def init(session: Session, admin_id: str, name: str, timezone: str) -> None:
    """Create a new store with its first admin."""
    if session.path.exists() and session.path.stat().st_size:
        raise InputError(f"{session.path} exists already: choose another --db path")
    with session.open_store(create=True) as store:
        actor = staff.init_store(store, admin_id, name, os_account(), timezone)
    click.echo(f"Store created at {session.path}; admin {actor.id} is mapped to OS account '{actor.os_account}'.")


@click.group("staff")
def staff_group() -> None:
    """Staff who use the store: phone-line clerks, nurses, supervisors, admins."""


@staff_group.command("add")
@click.argument("staff_id")
@click.option("--name", required=True)
@click.option("--role", required=True, type=click.Choice(["phone", "nurse", "supervisor", "admin"]))
@click.option("--os-account", help="OS account that signs in as this staff member.")
@pass_session
def staff_add(session: Session, staff_id: str, name: str, role: str, os_account: str | None) -> None:
    """Add a staff member (admins only)."""
    member = staff.add_staff(session.context(), staff_id, name, role, os_account)
    click.echo(f"Added {member.role.value} {member.id} ({printable(member.name)}).")


@staff_group.command("map")
@click.argument("staff_id")
@click.argument("account")
@pass_session
def staff_map(session: Session, staff_id: str, account: str) -> None:
    """Map an OS account to a staff member (admins only)."""
    staff.map_account(session.context(), staff_id, account)
    click.echo(f"OS account '{printable(account)}' now signs in as {staff_id}.")


@staff_group.command("deactivate")
@click.argument("staff_id")
@pass_session
def staff_deactivate(session: Session, staff_id: str) -> None:
    """Stop a staff member from doing anything (admins only); their records stay."""
    staff.set_active(session.context(), staff_id, False)
    click.echo(f"{staff_id} is inactive.")


@staff_group.command("list")
@pass_session
def staff_list(session: Session) -> None:
    """The staff of this store."""
    ctx = session.context()
    rows = [[s.id, s.name, s.role.value, "yes" if s.active else "no", s.os_account or ""] for s in ctx.store.staff.all()]
    print_table(["id", "name", "role", "active", "OS account"], rows)


@click.group("patient")
def patient_group() -> None:
    """Patients on the caseload."""


@patient_group.command("add")
@click.argument("patient_id")
@click.option("--name", required=True)
@click.option("--born", required=True, metavar="YYYY-MM-DD")
@click.option("--nurse", metavar="STAFF", help="The patient's nurse.")
@click.option("--plan", default="natural", show_default=True, type=click.Choice(["natural", "timed", "ovulation-induction", "insemination"]))
@click.option("--no-temps", is_flag=True, help="The patient does not chart basal temperatures.")
@pass_session
def patient_add(session: Session, patient_id, name, born, nurse, plan, no_temps) -> None:
    """Register a patient."""
    p = patients.add_patient(session.context(), patient_id, name, born, nurse, plan, not no_temps)
    click.echo(f"Registered {p.id} ({printable(p.name)}), plan {p.plan.value}.")


@patient_group.command("set")
@click.argument("patient_id")
@click.option("--plan", type=click.Choice(["natural", "timed", "ovulation-induction", "insemination"]))
@click.option("--status", type=click.Choice(["active", "paused", "discharged", "pregnant"]))
@click.option("--nurse", metavar="STAFF")
@pass_session
def patient_set(session: Session, patient_id, plan, status, nurse) -> None:
    """Change a patient's plan, status or nurse (nurses and up)."""
    p = patients.update_patient(session.context(), patient_id, plan=plan, status=status, nurse=nurse)
    click.echo(f"{p.id}: plan {p.plan.value}, status {p.status.value}, nurse {p.nurse_id or '-'}.")


@click.command(epilog=KIND_HELP)
@click.argument("patient_id", metavar="PATIENT")
@click.argument("kind", metavar="KIND")
@click.argument("value")
@click.option("--on", "on", default="today", show_default=True, help="Day: YYYY-MM-DD, today, yesterday or -N.")
@click.option("--at", "at", metavar="HH:MM", help="Time of the reading.")
@click.option("--flag", "flags", multiple=True, help="Disturbance (illness, poor-sleep, alcohol, late, other) or midcycle.")
@click.option("--note", default="", help="Free-text note.")
@pass_session
def log(session: Session, patient_id, kind, value, on, at, flags, note) -> None:
    """Log one entry for a patient: 'caseload log P0001 temp 36.72', 'caseload log P0001 bleed heavy --on yesterday'."""
    done = entry_service.log_entry(session.context(), patient_id, kind, value, on, at, flags, note)
    e = done.entry
    click.echo(f"Logged entry {e.id}: {e.patient_id} {e.kind.value} {printable(e.value.display())} on {e.day.isoformat()}. {done.refreshed.summary()}")


@click.command("import")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@pass_session
def import_(session: Session, file: str) -> None:
    """Import entries from CSV (patient,day,kind,value[,time,flags,note]): all rows or none."""
    done = importer.import_csv(session.context(), Path(file).read_bytes())
    click.echo(f"Imported {done.rows} entries for {done.patients} patients.")


@click.command()
@click.argument("patient_id", metavar="PATIENT")
@click.option("--json", "as_json", is_flag=True)
@pass_session
def entries(session: Session, patient_id: str, as_json: bool) -> None:
    """The patient's entries with their ids; corrections and voids shown."""
    rows = entry_service.patient_entries(session.context(), patient_id)
    if as_json:
        echo_json([entry_json(e) for e in rows])
    else:
        entries_table(rows)


@click.command()
@click.argument("entry_id")
@click.argument("value")
@click.option("--reason", required=True, help="Why the entry is corrected.")
@pass_session
def amend(session: Session, entry_id: str, value: str, reason: str) -> None:
    """Correct an entry: a new entry supersedes it; the old one stays, struck through."""
    done = entry_service.amend_entry(session.context(), entry_id, value, reason)
    click.echo(f"Entry {done.entry.id} supersedes entry {entry_id}. {done.refreshed.summary()}")


@click.command()
@click.argument("entry_id")
@click.option("--reason", required=True, help="Why the entry does not count.")
@pass_session
def void(session: Session, entry_id: str, reason: str) -> None:
    """Void an entry: it stays on record with the reason, and no longer counts."""
    done = entry_service.void_entry(session.context(), entry_id, reason)
    click.echo(f"Entry {done.entry.id} is void. {done.refreshed.summary()}")


@click.command()
@click.argument("patient_id", metavar="PATIENT")
@click.option("--json", "as_json", is_flag=True, help="Machine-readable output (stable keys).")
@pass_session
def show(session: Session, patient_id: str, as_json: bool) -> None:
    """One patient: cycles, statistics, FIGO classification, prediction, thermal shift, pregnancy, alerts."""
    record = caseload_service.show_patient(session.context(), patient_id)
    if as_json:
        echo_json(record.to_json())
    else:
        from caseload.cli.text_views import record_text

        record_text(record)


@click.command("list")
@click.option("--json", "as_json", is_flag=True)
@pass_session
def list_(session: Session, as_json: bool) -> None:
    """The caseload in triage order, as the interface's main list shows it."""
    lines = caseload_service.list_caseload(session.context())
    if as_json:
        echo_json([line.to_json() for line in lines])
    else:
        list_table(lines)


COMMANDS = [init, staff_group, patient_group, log, import_, entries, amend, void, show, list_]
