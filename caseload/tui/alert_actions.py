"""Acknowledging, snoozing and resolving an alert from any screen that lists alerts."""

from __future__ import annotations

from textual.screen import Screen

from caseload.core.model import Alert
from caseload.application import alert_handling as alert_service
from caseload.tui.alert_support import note_required
from caseload.tui.screens.note_dialog import HandleNote, NoteDialog
from caseload.tui.words import alert_label
from caseload.tui.writes import write

PAST = {"acknowledge": "Acknowledged", "snooze": "Snoozed", "resolve": "Resolved"}


def start_handling(screen: Screen, alert: Alert, verb: str) -> None:
    """Ask for the note, then run the service call in a worker."""
    def done(answer: HandleNote | None) -> None:
        if answer is None:
            return

        def summary(handled: Alert) -> str:
            return f"{PAST[verb]} #{handled.id} {alert_label(handled.kind)} for {handled.patient_id}."

        if verb == "snooze":
            write(screen, alert_service.snooze, alert.id, answer.until.isoformat(), answer.note, summary=summary)
        else:
            write(screen, getattr(alert_service, verb), alert.id, answer.note, summary=summary)

    dialog = NoteDialog(alert, verb, screen.app.gate.today, note_required(alert))
    screen.app.push_screen(dialog, done)
