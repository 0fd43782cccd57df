"""The summary as CSV files in one folder: a file per table, named after its section and table
(a section's tables have different columns, and a CSV file has one header row), plus week.csv."""

from __future__ import annotations

import csv
from datetime import date, datetime
from pathlib import Path

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import Table, sections

WEEK_FILE = "week.csv"


def text(value) -> str:
    if value is None:
        return ""
    if isinstance(value, datetime):
        return value.isoformat(timespec="minutes")
    if isinstance(value, date):
        return value.isoformat()
    return str(value)


def file_name(section_id: str, table: Table) -> str:
    return f"{section_id}-{table.id}.csv"


def _write(path: Path, header: list[str], rows) -> None:
    with open(path, "w", newline="", encoding="utf-8") as f:
        out = csv.writer(f)
        out.writerow(header)
        out.writerows([text(v) for v in row] for row in rows)


def write_csv(summary: WeeklySummary, folder: Path) -> None:
    """Write every file into `folder` (which must exist)."""
    w = summary.week
    _write(folder / WEEK_FILE, ["week", "first_day", "last_day", "timezone", "hours", "prepared_on", "deidentified"],
           [[w.label, w.first_day, w.last_day, w.timezone, w.hours, summary.prepared_on, summary.deidentified]])
    for section in sections(summary):
        for table in section.tables:
            rows = [*table.rows, *([table.total] if table.total else [])]
            _write(folder / file_name(section.id, table), [c.id for c in table.columns], rows)

