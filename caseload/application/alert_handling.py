"""The alert queue and its handling: list, acknowledge, snooze, resolve.

Clinical kinds need a nurse, supervisor or admin and a note saying what was done; routine kinds
(a logging gap) anyone may handle, a note optional. Each change is one transaction with its audit row.
"""

from __future__ import annotations

from caseload.core import alerts as rules
from caseload.core.alerts.lifecycle import ALLOWED_FROM, effective, parse_future_day
from caseload.core.model import Alert, AlertState
from caseload.core.parse import InputError, one_line
from caseload.application.context import Context, allowed
from caseload.application.errors import NotFound, Refused
from caseload.application.staff import get_staff

STATES = ("open", "all")
NOTE_MAX = 500


def is_clinical(kind: str) -> bool:
    """Clinical kinds need a nurse or above and a note; see caseload.core.alerts.CLINICAL_KINDS."""
    return rules.is_clinical(kind)


def _order(a: Alert) -> tuple:
    return (a.state is AlertState.RESOLVED, *rules.triage_key(a))


def list_alerts(ctx: Context, state: str = "open", kind: str | None = None, nurse: str | None = None) -> list[Alert]:
    """The queue (state "open": open, and snoozed until a day that has come) or every alert ("all"),
    most pressing first. Alerts come back as the lists show them: a snooze that is due reads open."""
    ctx.require("alert.view")
    if state not in STATES:
        raise InputError(f"state '{one_line(state)}' not accepted: use one of {', '.join(STATES)}")
    if kind is not None and kind not in rules.ALERT_KINDS:
        raise InputError(f"alert kind '{one_line(kind)}' not known: use one of {', '.join(rules.ALERT_KINDS)}")
    stored = ctx.store.alerts.unresolved() if state == "open" else ctx.store.alerts.all()
    found = [effective(a, ctx.today) for a in stored]
    if state == "open":
        found = [a for a in found if a.state is AlertState.OPEN]
    if kind is not None:
        found = [a for a in found if a.kind == kind]
    if nurse is not None:
        nurse_id = get_staff(ctx.store, nurse).id
        theirs = {p.id for p in ctx.store.patients.all() if p.nurse_id == nurse_id}
        found = [a for a in found if a.patient_id in theirs]
    return sorted(found, key=_order)


def get_alert(ctx: Context, alert_id: int | str) -> Alert:
    try:
        alert = ctx.store.alerts.get(int(alert_id))
    except (ValueError, OverflowError):  # not a number, or beyond SQLite's integers
        alert = None
    if alert is None:
        raise NotFound(f"no alert '{one_line(str(alert_id))}': see 'caseload alerts'")
    return alert


def _may_handle(ctx: Context, alert: Alert) -> None:
    ctx.require("alert.handle-routine")  # refuses inactive staff before anything else
    if is_clinical(alert.kind):
        if not allowed(ctx.actor, "alert.handle"):
            role = ctx.actor.role.value
            raise Refused(f"{alert.kind} is a clinical alert: a nurse, supervisor or admin handles it ({role} staff may not)")


def _note(alert: Alert, text: str | None) -> str | None:
    note = " ".join((text or "").split())
    if len(note) > NOTE_MAX:
        raise InputError(f"note is {len(note)} characters: keep it to {NOTE_MAX}")
    if not note and is_clinical(alert.kind):
        raise InputError(f"{alert.kind} is a clinical alert: say what was done with --note")
    return note or None


def _refusal(alert: Alert) -> Refused:
    if alert.state is AlertState.RESOLVED:
        why = alert.resolved_reason or f"by {alert.handled_by}"
        return Refused(f"alert {alert.id} is resolved ({why}): nothing left to do")
    return Refused(f"alert {alert.id} is already {alert.state.value} by {alert.handled_by}: snooze or resolve it instead")


def _handle(ctx: Context, alert_id: int | str, target: AlertState, note: str | None, until: str | None = None) -> Alert:
    alert = get_alert(ctx, alert_id)
    _may_handle(ctx, alert)
    text = _note(alert, note)
    day = None if until is None else parse_future_day(until, ctx.today)

    with ctx.store.atomic(ctx.today):
        stored = ctx.store.alerts.get(alert.id)  # again inside the write: another terminal may have acted
        if effective(stored, ctx.today).state not in ALLOWED_FROM[target]:
            raise _refusal(stored)
        return ctx.store.alerts.handle(ctx.actor, stored, target, text, day)


def acknowledge(ctx: Context, alert_id: int | str, note: str | None) -> Alert:
    """Someone is on it: off the queue until resolved, or until it is escalated."""
    return _handle(ctx, alert_id, AlertState.ACKNOWLEDGED, note)


def snooze(ctx: Context, alert_id: int | str, until: str, note: str | None) -> Alert:
    """Off the queue until a later day (YYYY-MM-DD, tomorrow or +N), then back as open."""
    return _handle(ctx, alert_id, AlertState.SNOOZED, note, until)


def resolve(ctx: Context, alert_id: int | str, note: str | None) -> Alert:
    """Done with: its episode is raised again only if the finding gets worse (as a new alert row)."""
    return _handle(ctx, alert_id, AlertState.RESOLVED, note)
