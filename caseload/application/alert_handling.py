"""The alert queue and its handling: list, acknowledge, snooze, resolve; and what of an alert each
role may see.

Clinical kinds need a nurse, supervisor or admin and a note saying what was done; routine kinds
(a logging gap) anyone may handle, a note optional. Each change is one transaction with its audit row.
Phone staff get a clinical alert only as the caller's view (`as_seen`), wherever it leaves the application.
"""

from __future__ import annotations

from dataclasses import replace

from caseload.core import alerts as rules
from caseload.core.alerts.lifecycle import ALLOWED_FROM, effective, parse_future_day
from caseload.core.model import Actor, Alert, AlertState, AlertStep
from caseload.core.parse import InputError, one_line
from caseload.application.context import Context, allowed
from caseload.application.errors import NotFound, Refused
from caseload.application.staff import get_staff

STATES = ("open", "all")
NOTE_MAX = 500


def is_clinical(kind: str) -> bool:
    """Clinical kinds need a nurse or above and a note; see caseload.core.alerts.CLINICAL_KINDS."""
    return rules.is_clinical(kind)


def caller_view_only(actor: Actor, kind: str) -> bool:
    """Whether `actor` is given only the caller's view of an alert of `kind`: a clinical kind, and a
    role that does not handle clinical alerts (phone staff)."""
    return is_clinical(kind) and not allowed(actor, "alert.handle")


def as_seen(ctx: Context, alert: Alert) -> Alert:
    """The alert as it may leave the application for the acting staff member. For phone staff a
    clinical alert becomes the caller's view: patient, kind, severity, state and dates kept, the
    message replaced by the protocol's words for the caller, and no evidence, rule, source, handling
    note or reason for an automatic resolution. Every field stays, so every JSON key does too."""
    if not caller_view_only(ctx.actor, alert.kind):
        return alert
    return replace(alert, message=ctx.protocol.caller_message, evidence={}, rule="", source="", note=None,
                   resolved_reason=None)


def steps_as_seen(ctx: Context, alerts: list[Alert], steps: tuple[AlertStep, ...]) -> tuple[AlertStep, ...]:
    """The history of `alerts` as the acting staff member may see it: for an alert given as the
    caller's view, who did what and when, without the handling notes and reasons."""
    hidden = {a.id for a in alerts if caller_view_only(ctx.actor, a.kind)}
    return tuple(replace(s, note=None, reason=None) if s.alert_id in hidden else s for s in steps)


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
    return [as_seen(ctx, a) for a in sorted(found, key=_order)]


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
    day = None if until is None else parse_future_day(until, ctx.today, alert.severity)

    with ctx.store.atomic(ctx.today):
        stored = ctx.store.alerts.get(alert.id)  # again inside the write: another terminal may have acted
        if effective(stored, ctx.today).state not in ALLOWED_FROM[target]:
            raise _refusal(stored)
        return as_seen(ctx, ctx.store.alerts.handle(ctx.actor, stored, target, text, day))


def acknowledge(ctx: Context, alert_id: int | str, note: str | None) -> Alert:
    """Someone is on it: off the queue until resolved, or until it is escalated."""
    return _handle(ctx, alert_id, AlertState.ACKNOWLEDGED, note)


def snooze(ctx: Context, alert_id: int | str, until: str, note: str | None) -> Alert:
    """Off the queue until a later day (YYYY-MM-DD, tomorrow or +N), then back as open."""
    return _handle(ctx, alert_id, AlertState.SNOOZED, note, until)


def resolve(ctx: Context, alert_id: int | str, note: str | None) -> Alert:
    """Done with: its episode is raised again only if the finding gets worse (as a new alert row)."""
    return _handle(ctx, alert_id, AlertState.RESOLVED, note)
