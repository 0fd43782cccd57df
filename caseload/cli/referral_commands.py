"""Records that travel: the referral pack and the FHIR export (nurses and up; both audited)."""

from __future__ import annotations

from pathlib import Path

import click

from caseload.application.clinic import Clinic
from caseload.application.referral import PAPERS
from caseload.cli.global_options import pass_clinic
from caseload.exports import fhir as fhir_files
from caseload.exports import pack_files
from caseload.presentation.safe_text import printable


@click.command()
@click.argument("patient")
@click.option("--out", required=True, type=click.Path(), help="FILE.pdf or FILE.html to write (owner-only).")
@click.option("--cycles", default=3, show_default=True, type=click.IntRange(min=1), help="How many recent cycles to chart.")
@click.option("--paper", default="a4", show_default=True, type=click.Choice(PAPERS), help="Paper size of a PDF.")
@click.option("--force", is_flag=True, help="Replace the file if it exists.")
@pass_clinic
def pack(clinic: Clinic, patient: str, out: str, cycles: int, paper: str, force: bool) -> None:
    """Make PATIENT's referral pack: summary, alerts, charts and entries of the last cycles."""
    path = clinic.referral_pack(patient, Path(out), cycles, paper, force, pack_files.render)
    click.echo(f"Referral pack for {printable(patient.strip())} written to {printable(path)}.")


@click.command()
@click.argument("patient", required=False)
@click.option("--all", "everyone", is_flag=True, help="Every patient in the store instead of one.")
@click.option("--out", required=True, type=click.Path(), help="FILE.json to write (owner-only).")
@click.option("--since", metavar="DATE", help="Leave out entries and derived dates before this day.")
@click.option("--deidentify", is_flag=True, help="Keyed pseudonyms, no names or birth dates, dates shifted per patient, no free text.")
@click.option("--force", is_flag=True, help="Replace the file if it exists.")
@pass_clinic
def fhir(clinic: Clinic, patient: str | None, everyone: bool, out: str, since: str | None,
         deidentify: bool, force: bool) -> None:
    """Export PATIENT (or --all) as an HL7 FHIR R4 Bundle of type collection."""
    if bool(patient) == everyone:
        raise click.UsageError("give one PATIENT or --all, not both and not neither")
    path, count = clinic.fhir_export(patient, Path(out), since, deidentify, force, fhir_files.write_bundle)
    kind = "de-identified " if deidentify else ""
    click.echo(f"FHIR R4 bundle ({kind}{count} resources) written to {printable(path)}.")


COMMANDS = [pack, fhir]
