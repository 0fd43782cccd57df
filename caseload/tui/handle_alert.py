"""Handling an alert from any screen that lists alerts: who is offered what, then the note dialog
and the Clinic call (which checks the permission again)."""

from __future__ import annotations

from textual.screen import Screen

from caseload.application.alert_handling import is_clinical
from caseload.application.clinic import Clinic
from caseload.core.model import Alert, AlertState
from caseload.tui.screens.note_dialog import HandleNote, NoteDialog
from caseload.presentation.glossary import alert_label, not_used

PAST = {"acknowledge": "Acknowledged", "snooze": "Snoozed", "resolve": "Resolved"}


def may_handle(clinic: Clinic, alert: Alert) -> bool:
    """Clinical alerts need a clinical role; routine ones anyone may handle; a resolved one nobody."""
    if alert.state is AlertState.RESOLVED:
        return False
    return clinic.may("alert.handle" if is_clinical(alert.kind) else "alert.handle-routine")


def refusal(clinic: Clinic, alert: Alert | None, verb: str) -> str:
    """The one line for a handling key pressed where it does nothing."""
    if alert is None:
        return f"No alert picked: move to an alert to {verb} it."
    if alert.state is AlertState.RESOLVED:
        return f"Alert #{alert.id} is resolved: nothing left to {verb}."
    role = clinic.actor.role.value
    return f"A nurse handles {alert_label(alert.kind)} alerts: {role} staff may not {verb} them."


def note_required(alert: Alert) -> bool:
    return is_clinical(alert.kind)


def start_handling(screen: Screen, alert: Alert, verb: str) -> None:
    """Ask for the note, then run the Clinic call in the app's save worker."""
    def done(answer: HandleNote | None) -> None:
        if answer is None:
            return

        def summary(handled: Alert) -> str:
            said = f"{PAST[verb]} #{handled.id} {alert_label(handled.kind)} for {handled.patient_id}."
            return f"{said} {not_used(answer.set_aside)}" if answer.set_aside else said

        if verb == "snooze":
            screen.app.save(clinic.snooze, alert.id, answer.until.isoformat(), answer.note, summary=summary)
        else:
            handle = {"acknowledge": clinic.acknowledge, "resolve": clinic.resolve}[verb]
            screen.app.save(handle, alert.id, answer.note, summary=summary)

    clinic = screen.app.clinic
    dialog = NoteDialog(alert, verb, clinic.as_of, note_required(alert))
    screen.app.push_screen(dialog, done)
