"""The summary as one JSON document: the week, then each section's tables as lists of records
keyed by column id, each with its total record (or null); `caution` is the tool's caution."""

from __future__ import annotations

import json
from datetime import date, datetime
from pathlib import Path

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import sections
from caseload.presentation.glossary import CAUTION


def _value(value):
    if isinstance(value, datetime):
        return value.isoformat(timespec="minutes")
    if isinstance(value, date):
        return value.isoformat()
    return value


def document(summary: WeeklySummary) -> dict:
    w = summary.week
    doc: dict = {
        "week": {
            "label": w.label,
            "first_day": w.first_day.isoformat(),
            "last_day": w.last_day.isoformat(),
            "timezone": w.timezone,
            "start": w.start.isoformat(),
            "end": w.end.isoformat(),
            "hours": w.hours,
        },
        "prepared_on": summary.prepared_on.isoformat(),
        "complete": summary.complete,
        "deidentified": summary.deidentified,
        "caution": CAUTION,
    }
    for section in sections(summary):
        doc[section.id] = {
            table.id: {
                "title": table.title,
                "rows": [{k: _value(v) for k, v in record.items()} for record in table.records()],
                "total": None if table.total is None
                else {c.id: _value(v) for c, v in zip(table.columns, table.total)},
            }
            for table in section.tables
        }
    return doc


def write_json(summary: WeeklySummary, path: Path) -> None:
    path.write_text(json.dumps(document(summary), indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
