"""Changes saved from the interface, and what the app tells its screens afterwards.

A save runs in the app's worker (`CaseloadApp.save`); when it is done the app gets `Saved`, shows
its summary, updates the one list row the save changed from the snapshot it returned, and sends
`StoreChanged` to every open screen, which reads again what it shows.
"""

from __future__ import annotations

from typing import Any

from textual.message import Message

from caseload.application.entries import Logged
from caseload.core.model import Kind
from caseload.presentation.glossary import refreshed_line
from caseload.presentation.safe_text import printable


class Saved(Message):
    """A change was saved; `summary` is the one line to show (None: the screen that saved shows it)."""

    def __init__(self, summary: str | None, result: Any = None) -> None:
        super().__init__()
        self.summary = summary
        self.result = result


class StoreChanged(Message):
    """The store changed; `row_updated` says the caseload list already holds the change."""

    def __init__(self, row_updated: bool) -> None:
        super().__init__()
        self.row_updated = row_updated


def _state_after(done: Logged) -> str:
    return " " + refreshed_line(done.refreshed)


def logged_summary(done: Logged) -> str:
    """What a clerk reads after saving: the entry, the new cycle day, any alert it raised."""
    e = done.entry
    unit = " C" if e.kind is Kind.TEMP else ""
    value = printable(e.value.display())
    return f"Saved #{e.id} for {e.patient_id}: {e.kind.value} {value}{unit} on {e.day.isoformat()}." + _state_after(done)


def voided_summary(done: Logged) -> str:
    e = done.entry
    return f"Voided #{e.id} for {e.patient_id} ({e.kind.value} on {e.day.isoformat()})." + _state_after(done)
