"""One computed summary, written in the format asked for: one file, or a folder of CSV files."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from caseload.exports.summary_csv import csv_files
from caseload.exports.summary_html import write_html
from caseload.exports.summary_json import write_json
from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_xlsx import write_xlsx

WRITERS: dict[str, Callable[[WeeklySummary, Path], None]] = {
    "xlsx": write_xlsx,
    "html": write_html,
    "json": write_json,
}
FORMATS = ("xlsx", "html", "csv", "json")
FOLDER_FORMATS = frozenset({"csv"})


def output_files(summary: WeeklySummary, fmt: str, out: Path) -> list[tuple[Path, Callable[[Path], None]]]:
    """Each file the export writes, with the function that writes its content to a given path."""
    if fmt in FOLDER_FORMATS:
        return [(out / name, write) for name, write in csv_files(summary)]
    return [(out, lambda path: WRITERS[fmt](summary, path))]
