"""`caseload patient ...`, `show` and `list`: patients, one record, and the caseload in triage order."""

from __future__ import annotations

import click

from caseload.application.clinic import Clinic
from caseload.cli.global_options import echo_json, pass_clinic
from caseload.presentation import json_shapes
from caseload.presentation.safe_text import printable

PLANS = ["natural", "timed", "ovulation-induction", "insemination"]


@click.group("patient")
def patient_group() -> None:
    """Patients on the caseload."""


@patient_group.command("add")
@click.argument("patient_id")
@click.option("--name", required=True)
@click.option("--born", required=True, metavar="YYYY-MM-DD")
@click.option("--nurse", metavar="STAFF", help="The patient's nurse.")
@click.option("--plan", default="natural", show_default=True, type=click.Choice(PLANS))
@click.option("--no-temps", is_flag=True, help="The patient does not chart basal temperatures.")
@pass_clinic
def patient_add(clinic: Clinic, patient_id, name, born, nurse, plan, no_temps) -> None:
    """Register a patient."""
    p = clinic.register_patient(patient_id, name, born, nurse, plan, not no_temps)
    click.echo(f"Registered {p.id} ({printable(p.name)}), plan {p.plan.value}.")


@patient_group.command("set")
@click.argument("patient_id")
@click.option("--plan", type=click.Choice(PLANS))
@click.option("--status", type=click.Choice(["active", "paused", "discharged", "pregnant"]))
@click.option("--nurse", metavar="STAFF")
@pass_clinic
def patient_set(clinic: Clinic, patient_id, plan, status, nurse) -> None:
    """Change a patient's plan, status or nurse (nurses and up)."""
    p = clinic.set_patient(patient_id, plan=plan, status=status, nurse=nurse)
    click.echo(f"{p.id}: plan {p.plan.value}, status {p.status.value}, nurse {p.nurse_id or '-'}.")


@click.command()
@click.argument("patient_id", metavar="PATIENT")
@click.option("--json", "as_json", is_flag=True, help="Machine-readable output (stable keys).")
@pass_clinic
def show(clinic: Clinic, patient_id: str, as_json: bool) -> None:
    """One patient: cycles, statistics, FIGO classification, prediction, thermal shift, pregnancy, alerts."""
    record = clinic.patient_record(patient_id)
    if as_json:
        echo_json(json_shapes.patient_record(record))
    else:
        from caseload.cli.printing import record_text  # rich loads only for a terminal's text

        record_text(record)


@click.command("list")
@click.option("--json", "as_json", is_flag=True)
@pass_clinic
def list_(clinic: Clinic, as_json: bool) -> None:
    """The caseload in triage order, as the interface's main list shows it."""
    lines = clinic.morning_list()
    if as_json:
        echo_json([json_shapes.caseload_line(line) for line in lines])
    else:
        from caseload.cli.printing import list_table  # rich loads only for a terminal's text

        list_table(lines)


COMMANDS = [patient_group, show, list_]
