"""Records that travel: the referral pack and the FHIR export (nurses and up; both audited)."""

from __future__ import annotations

from pathlib import Path

import click

from caseload.cli.session import Session, pass_session
from caseload.core.parse import parse_day
from caseload.exports.pack import PAPERS
from caseload.application import referral


@click.command()
@click.argument("patient")
@click.option("--out", required=True, type=click.Path(), help="FILE.pdf or FILE.html to write (owner-only).")
@click.option("--cycles", default=3, show_default=True, type=click.IntRange(min=1), help="How many recent cycles to chart.")
@click.option("--paper", default="a4", show_default=True, type=click.Choice(PAPERS), help="Paper size of a PDF.")
@click.option("--force", is_flag=True, help="Replace the file if it exists.")
@pass_session
def pack(session: Session, patient: str, out: str, cycles: int, paper: str, force: bool) -> None:
    """Make PATIENT's referral pack: summary, alerts, charts and entries of the last cycles."""
    path = referral.make_pack(session.context(), patient, Path(out), cycles, paper, force)
    click.echo(f"Referral pack for {patient.strip()} written to {path}.")


@click.command()
@click.argument("patient", required=False)
@click.option("--all", "everyone", is_flag=True, help="Every patient in the store instead of one.")
@click.option("--out", required=True, type=click.Path(), help="FILE.json to write (owner-only).")
@click.option("--since", metavar="DATE", help="Leave out entries and derived dates before this day.")
@click.option("--deidentify", is_flag=True, help="Keyed pseudonyms, no names or birth dates, dates shifted per patient, no free text.")
@click.option("--force", is_flag=True, help="Replace the file if it exists.")
@pass_session
def fhir(session: Session, patient: str | None, everyone: bool, out: str, since: str | None,
         deidentify: bool, force: bool) -> None:
    """Export PATIENT (or --all) as an HL7 FHIR R4 Bundle of type collection."""
    if bool(patient) == everyone:
        raise click.UsageError("give one PATIENT or --all, not both and not neither")
    ctx = session.context()
    day = parse_day(since, ctx.today) if since else None
    path, count = referral.export_fhir(ctx, patient, Path(out), day, deidentify, force)
    kind = "de-identified " if deidentify else ""
    click.echo(f"FHIR R4 bundle ({kind}{count} resources) written to {path}.")


COMMANDS = [pack, fhir]
