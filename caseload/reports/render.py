"""One computed summary, written in the format asked for."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from caseload.reports.csv_export import write_csv
from caseload.reports.html_export import write_html
from caseload.reports.json_export import write_json
from caseload.reports.model import WeeklySummary
from caseload.reports.xlsx_export import write_xlsx

WRITERS: dict[str, Callable[[WeeklySummary, Path], None]] = {
    "xlsx": write_xlsx,
    "html": write_html,
    "csv": write_csv,  # a folder of files
    "json": write_json,
}
FORMATS = tuple(WRITERS)
FOLDER_FORMATS = frozenset({"csv"})


def write(summary: WeeklySummary, fmt: str, path: Path) -> None:
    WRITERS[fmt](summary, path)
