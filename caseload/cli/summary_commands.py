"""The weekly summary export for supervisors."""

from __future__ import annotations

from pathlib import Path

import click

from caseload.application.clinic import Clinic
from caseload.application.weekly_summary import FORMATS
from caseload.cli.global_options import pass_clinic
from caseload.exports.summary_files import write


@click.command()
@click.option("--week", required=True, metavar="YYYY-Www", help="ISO week in the clinic's time zone, e.g. 2026-W48.")
@click.option("--format", "fmt", required=True, type=click.Choice(FORMATS), help="xlsx, html, json (a file) or csv (a folder of files).")
@click.option("--out", required=True, type=click.Path(), help="File to write; for csv, the folder to write into.")
@click.option("--deidentify", is_flag=True, help="Patients as keyed pseudonyms, without names or birth dates.")
@pass_clinic
def summary(clinic: Clinic, week: str, fmt: str, out: str, deidentify: bool) -> None:
    """Export the weekly caseload summary (supervisors and admins); every export is audited."""
    path = clinic.export_summary(week, fmt, Path(out), deidentify, write)
    kind = "de-identified " if deidentify else ""
    click.echo(f"Weekly summary {week.strip().upper()} written to {path} ({kind}{fmt}).")


COMMANDS = [summary]
