"""Changes made from the interface: each runs in a worker, then one message tells the app it is done.

The app answers a `Written` by showing its summary and letting every open screen read again.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from textual.message import Message
from textual.screen import Screen

from caseload.core.model import Kind
from caseload.application.entries import Logged
from caseload.tui.words import alert_label, phase_label, plain


class Written(Message):
    """A change was saved; `summary` is the one line to show."""

    def __init__(self, summary: str, result: Any = None) -> None:
        super().__init__()
        self.summary = summary
        self.result = result


def write(
    screen: Screen,
    use_case: Callable[..., Any],
    *args,
    summary: Callable[[Any], str],
    refusal: Callable[[str], Message] | None = None,
    **kwargs,
):
    """Run a writing use case; when done the app gets a `Written` with `summary(result)`."""
    app = screen.app
    return app.store_job(
        app, use_case, *args, reply=lambda result: Written(summary(result), result), refusal=refusal, **kwargs
    )


def _state_after(done: Logged) -> str:
    snap = done.refreshed.snapshot
    day = snap.cycle_day(snap.computed_on)
    text = f" Now cycle day {day}, {phase_label(snap.phase)}." if day else f" No cycle start yet ({phase_label(snap.phase)})."
    if done.refreshed.raised:
        text += " Raised: " + "; ".join(f"{alert_label(a.kind)} ({a.severity.value})" for a in done.refreshed.raised) + "."
    return text


def logged_summary(done: Logged) -> str:
    """What a clerk reads after saving: the entry, the new cycle day, any alert it raised."""
    e = done.entry
    unit = " C" if e.kind is Kind.TEMP else ""
    value = plain(e.value.display())
    return f"Saved #{e.id} for {e.patient_id}: {e.kind.value} {value}{unit} on {e.day.isoformat()}." + _state_after(done)


def voided_summary(done: Logged) -> str:
    e = done.entry
    return f"Voided #{e.id} for {e.patient_id} ({e.kind.value} on {e.day.isoformat()})." + _state_after(done)
