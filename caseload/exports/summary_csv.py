"""The summary as CSV files in one folder: a file per table, named after its section and table
(a section's tables have different columns, and a CSV file has one header row), plus week.csv,
which also carries the tool's caution. A yes-or-no cell reads "yes" or "no", as everywhere the
tool writes one for a person (the JSON keeps true and false)."""

from __future__ import annotations

import csv
from collections.abc import Callable
from datetime import date, datetime
from pathlib import Path

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import Table, sections
from caseload.presentation.glossary import CAUTION
from caseload.presentation.safe_text import spreadsheet_text

WEEK_FILE = "week.csv"
YES, NO = "yes", "no"


def text(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return YES if value else NO
    if isinstance(value, datetime):
        return value.isoformat(timespec="minutes")
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, str):
        return spreadsheet_text(value)
    return str(value)


def file_name(section_id: str, table: Table) -> str:
    return f"{section_id}-{table.id}.csv"


def _writer(header: list[str], rows) -> Callable[[Path], None]:
    def write(path: Path) -> None:
        # With a byte order mark, spreadsheet programs read the file as UTF-8 ("Lucía", not "LucÃ­a").
        with open(path, "w", newline="", encoding="utf-8-sig") as f:
            out = csv.writer(f)
            out.writerow(header)
            out.writerows([text(v) for v in row] for row in rows)

    return write


def csv_files(summary: WeeklySummary) -> list[tuple[str, Callable[[Path], None]]]:
    """Every file of the folder: its name and the function that writes it."""
    w = summary.week
    files = [(WEEK_FILE, _writer(
        ["week", "first_day", "last_day", "timezone", "hours", "prepared_on", "complete", "deidentified", "caution"],
        [[w.label, w.first_day, w.last_day, w.timezone, w.hours, summary.prepared_on, summary.complete,
          summary.deidentified, CAUTION]]))]
    for section in sections(summary):
        for table in section.tables:
            rows = [*table.rows, *([table.total] if table.total else [])]
            files.append((file_name(section.id, table), _writer([c.id for c in table.columns], rows)))
    return files
