"""One computed summary, written in the format asked for."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from caseload.exports.summary_csv import write_csv
from caseload.exports.summary_html import write_html
from caseload.exports.summary_json import write_json
from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_xlsx import write_xlsx

WRITERS: dict[str, Callable[[WeeklySummary, Path], None]] = {
    "xlsx": write_xlsx,
    "html": write_html,
    "csv": write_csv,  # a folder of files
    "json": write_json,
}


def write(summary: WeeklySummary, fmt: str, path: Path) -> None:
    WRITERS[fmt](summary, path)
