"""The weekly summary export for supervisors."""

from __future__ import annotations

from pathlib import Path

import click

from caseload.application.clinic import Clinic
from caseload.application.weekly_summary import FORMATS
from caseload.cli.global_options import pass_clinic
from caseload.exports.summary_files import write
from caseload.presentation.safe_text import printable


@click.command()
@click.option("--week", metavar="YYYY-Www",
              help="ISO week in the clinic's time zone, e.g. 2026-W48; by default the last complete week.")
@click.option("--format", "fmt", required=True, type=click.Choice(FORMATS), help="xlsx, html, json (a file) or csv (a folder of files).")
@click.option("--out", required=True, type=click.Path(), help="File to write; for csv, the folder to write into.")
@click.option("--deidentify", is_flag=True, help="Patients as keyed pseudonyms; no names, birth dates or free text.")
@click.option("--force", is_flag=True, help="Replace files that exist already (never the store or a backup).")
@pass_clinic
def summary(clinic: Clinic, week: str | None, fmt: str, out: str, deidentify: bool, force: bool) -> None:
    """Export the weekly caseload summary (supervisors and admins); every export is audited."""
    if week is None:  # not given; an empty --week "" is typed, and refused as a week not understood
        week = clinic.last_complete_week()
    path = clinic.export_summary(week, fmt, Path(out), deidentify, write, force)
    kind = "de-identified " if deidentify else ""
    click.echo(f"Weekly summary {week.strip().upper()} written to {printable(path)} ({kind}{fmt}).")


COMMANDS = [summary]
