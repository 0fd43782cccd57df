"""The alert section of the weekly summary: raised, handled, and still open at the week's end.

Everything comes from the audit trail of alert transitions (see store/reports.py), so a past
week reads as it stood then, whatever has happened to its alerts since.
"""

from __future__ import annotations

import math
from collections import Counter, defaultdict
from collections.abc import Callable, Iterable, Sequence

from caseload.core.alerts import ALERT_KINDS
from caseload.core.model import Severity
from caseload.application.week.figures import (
    TOTAL, AckTime, ActionCount, AlertNote, AlertSummary, KindCount, OpenAlert, PatientRef, WeekEndAlerts,
)
from caseload.application.week.period import Period
from caseload.store.summary_queries import AlertEvent

SEVERITIES = tuple(s.value for s in Severity)
PRESSING = (Severity.URGENT.value, Severity.TODAY.value)  # listed one by one when still open at the week's end
RAISE, ACK, RESOLVE = "alert.raise", "alert.ack", "alert.resolve"
ACTION_EVENTS = {
    RAISE: "raised",
    ACK: "acknowledged",
    "alert.snooze": "snoozed",
    "alert.resolve": "resolved",
    "alert.auto-resolve": "auto-resolved",
    "alert.escalate": "escalated",
    "alert.reopen": "reopened",
}
# What staff do to an alert (the engine's own transitions are not workload).
HANDLING = {ACK: "acknowledged", "alert.snooze": "snoozed", "alert.resolve": "resolved"}
# The state an action leaves; an escalation keeps the state unless the trail records one.
STATE_AFTER = {
    RAISE: "open",
    "alert.reopen": "open",
    ACK: "acknowledged",
    "alert.snooze": "snoozed",
    "alert.resolve": "resolved",
    "alert.auto-resolve": "resolved",
}


def percentile(values: Sequence[float], q: float) -> float:
    """Linear interpolation between closest ranks (the 'inclusive' method)."""
    ordered = sorted(values)
    position = q * (len(ordered) - 1)
    low = math.floor(position)
    high = min(low + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (position - low)


def _ack_time(severity: str, hours: Sequence[float]) -> AckTime:
    if not hours:
        return AckTime(severity, 0, None, None)
    return AckTime(severity, len(hours), round(percentile(hours, 0.5), 2), round(percentile(hours, 0.9), 2))


def _state(event: AlertEvent, previous: str) -> str:
    return event.state or STATE_AFTER.get(event.action, previous)


def _alert_states(period: Period, history: Iterable[AlertEvent],
                  unresolved_at_start: Iterable[AlertEvent]) -> list[tuple[str, AlertEvent]]:
    """(state, last transition) at the period's end of every alert not resolved then.

    An alert touched in the period is replayed from its raising; any other keeps its state at the
    start. As in the queue, a snooze until a day that has come (by the last day covered) is open.
    """
    last = {e.alert_id: (_state(e, "open"), e) for e in unresolved_at_start}
    replayed: dict[str, tuple[str, AlertEvent]] = {}
    for e in history:  # oldest first
        previous = replayed[e.alert_id][0] if e.alert_id in replayed else "open"
        replayed[e.alert_id] = (_state(e, previous), e)
    last.update(replayed)
    states = []
    for state, e in last.values():
        if state == "snoozed" and e.snooze_until is not None and e.snooze_until <= period.last_day:
            state = "open"
        if state != "resolved":
            states.append((state, e))
    return states


def _week_end_row(severity: str, states: Sequence[tuple[str, AlertEvent]], period: Period) -> WeekEndAlerts:
    open_ = [e for state, e in states if state == "open"]
    return WeekEndAlerts(
        severity=severity,
        open=len(open_),
        past_due=sum(1 for e in open_ if e.due is not None and e.due <= period.last_day),
        acknowledged=sum(state == "acknowledged" for state, _ in states),
        snoozed=sum(state == "snoozed" for state, _ in states),
    )


def _raised(in_week: Sequence[AlertEvent]) -> tuple[tuple[KindCount, ...], KindCount]:
    raised = Counter((e.kind, e.severity) for e in in_week if e.action == RAISE)
    kinds = (*ALERT_KINDS, *sorted({k for k, _ in raised} - set(ALERT_KINDS)))
    rows = tuple(KindCount(k, tuple(raised[(k, s)] for s in SEVERITIES), sum(raised[(k, s)] for s in SEVERITIES))
                 for k in kinds)
    by_severity = tuple(sum(r.by_severity[i] for r in rows) for i in range(len(SEVERITIES)))
    return rows, KindCount(TOTAL, by_severity, sum(r.total for r in rows))


def _hours_to_first_ack(period: Period, history: Sequence[AlertEvent]) -> dict[str, list[float]]:
    """Hours from raising to first acknowledgement of the alerts first acknowledged in the period,
    by their severity then. Instants are UTC, so a clock change does not bend the hours."""
    by_alert: dict[str, list[AlertEvent]] = defaultdict(list)
    for e in history:
        by_alert[e.alert_id].append(e)
    hours: dict[str, list[float]] = defaultdict(list)
    for events in by_alert.values():
        raising = next((e for e in events if e.action == RAISE), None)
        first_ack = next((e for e in events if e.action == ACK), None)
        if raising and first_ack and period.contains(first_ack.at):
            hours[first_ack.severity].append((first_ack.at - raising.at).total_seconds() / 3600)
    return hours


def _open_at_end(period: Period, states: Sequence[tuple[str, AlertEvent]], nurse_of: Callable[[str], str],
                 ref: Callable[[str], PatientRef]) -> tuple[OpenAlert, ...]:
    rows = [
        OpenAlert(nurse_of(e.patient_id), ref(e.patient_id), e.kind, e.severity, state, e.raised_on,
                  None if e.raised_on is None else (period.last_day - e.raised_on).days)
        for state, e in states if e.severity in PRESSING
    ]
    return tuple(sorted(rows, key=open_order))


def open_order(r: OpenAlert) -> tuple:
    """By nurse and severity, oldest first. An age not shown (de-identified, an alert raised before
    the week) is older than any shown, and sorts first without saying how old."""
    return (r.nurse, PRESSING.index(r.severity), r.age_days is not None, -(r.age_days or 0), r.patient.id)


def _urgent_notes(period: Period, in_week: Sequence[AlertEvent],
                  ref: Callable[[str], PatientRef]) -> tuple[AlertNote, ...]:
    return tuple(
        AlertNote(ref(e.patient_id), e.kind, HANDLING[e.action], e.by_staff, period.local(e.at), e.note or "")
        for e in in_week if e.action in (ACK, RESOLVE) and e.severity == Severity.URGENT.value
    )


def alert_summary(period: Period, history: Sequence[AlertEvent], unresolved_at_start: Sequence[AlertEvent],
                  nurse_of: Callable[[str], str], ref: Callable[[str], PatientRef]) -> AlertSummary:
    """`nurse_of` names a patient's nurse at the period's end; `ref` how a patient is shown."""
    in_week = [e for e in history if period.contains(e.at)]
    rows, raised_total = _raised(in_week)
    hours = _hours_to_first_ack(period, history)
    states = _alert_states(period, history, unresolved_at_start)
    week_end = tuple(_week_end_row(s, [(st, e) for st, e in states if e.severity == s], period) for s in SEVERITIES)
    return AlertSummary(
        raised=rows,
        raised_total=raised_total,
        actions=tuple(ActionCount(label, sum(e.action == action for e in in_week))
                      for action, label in ACTION_EVENTS.items()),
        ack_times=tuple(_ack_time(s, hours[s]) for s in SEVERITIES),
        ack_all=_ack_time("all", [h for values in hours.values() for h in values]),
        week_end=week_end,
        week_end_total=WeekEndAlerts(
            TOTAL,
            open=sum(r.open for r in week_end),
            past_due=sum(r.past_due for r in week_end),
            acknowledged=sum(r.acknowledged for r in week_end),
            snoozed=sum(r.snoozed for r in week_end),
        ),
        open_at_end=_open_at_end(period, states, nurse_of, ref),
        urgent_notes=_urgent_notes(period, in_week, ref),
    )
