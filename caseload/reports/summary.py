"""The weekly summary, computed from what the store returned for the week: pure, no SQL, no clock.

Counting is done by SQL (store/reports.py); this module only combines the counts. Two things
need the core: a thermal shift confirmed in the week is recomputed from each charting patient's
temperatures and bleeds of the recent past (one cycle's worth, not their whole history), and
the due date of a positive hCG comes from the core's pregnancy computation for those few patients.
"""

from __future__ import annotations

import math
from collections import Counter, defaultdict
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.alerts import ALERT_KINDS
from caseload.core.analysis import analyse
from caseload.core.cycles import CycleSpan, cycle_spans, group_by_cycle, menstrual_bleeds
from caseload.core.model import Entry, Kind, Observation, Patient, PatientStatus, Plan, Role, Severity, Staff, observations
from caseload.core.settings import Protocol
from caseload.core.thermal import three_over_six, valid_readings
from caseload.reports.model import (
    UNASSIGNED, AckTime, ActionCount, ActiveCount, AlertSummary, Census, Change, Clinical, ClinicalEvent, Coverage,
    DayLoad, EventCount, KindCount, LoggingGap, Movement, PatientRef, PositiveHcg, Quality, ReasonCount, RoleLoad,
    StaffLoad, StatusCount, StatusMove, WeekEndAlerts, WeeklySummary, Workload,
)
from caseload.reports.weeks import Week
from caseload.store.reports import AlertEvent, EntryChange, EntryCount, HcgPositive, PatientVersion

SEVERITIES = tuple(s.value for s in Severity)
ROLES = tuple(r.value for r in Role)
STATUSES = tuple(s.value for s in PatientStatus)
PLANS = tuple(p.value for p in Plan)
NEW = "new"
TOTAL = "total"
UNKNOWN_ROLE = "unknown"
ACTIVE = PatientStatus.ACTIVE.value

RAISE, ACK = "alert.raise", "alert.ack"
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
SHIFT_CONFIRMED, HCG_POSITIVE = "shift-confirmed", "hcg-positive"
# (event, description, the alert kinds whose raising counts as the event)
CLINICAL_EVENTS: tuple[tuple[str, str, tuple[str, ...]], ...] = (
    ("entered-window", "Entered a predicted fertile window (window-approaching or window-open raised)",
     ("window-approaching", "window-open")),
    (SHIFT_CONFIRMED, "Thermal shift confirmed (three-over-six rule)", ()),
    ("no-thermal-shift", "No thermal shift flagged", ("no-thermal-shift",)),
    ("monophasic-cycle", "Monophasic cycle flagged", ("monophasic-cycle",)),
    ("irregular-cycles", "Referred for irregular cycles", ("irregular-cycles",)),
    ("short-luteal-phase", "Short luteal phase", ("short-luteal-phase",)),
    (HCG_POSITIVE, "Positive hCG result", ()),
    ("hcg-rise-low", "Low hCG rise", ("hcg-rise-low",)),
)
EVENT_ALERT_KINDS = frozenset(k for _, _, kinds in CLINICAL_EVENTS for k in kinds)


@dataclass(frozen=True)
class WeekData:
    """Everything the store returned for one week."""

    staff: tuple[Staff, ...]
    patients: Mapping[str, Patient]
    at_start: Mapping[str, PatientVersion]
    at_end: Mapping[str, PatientVersion]
    alert_history: tuple[AlertEvent, ...]  # alerts with a transition in the week, history up to its end
    unresolved_at_start: tuple[AlertEvent, ...]  # last transition before the week of each unresolved alert
    entries_logged: tuple[EntryCount, ...]
    changes: tuple[EntryChange, ...]
    temperature_days: Mapping[str, tuple[date, ...]]
    cycles: Mapping[str, list[CycleSpan]]  # see `cycles_into_week`
    temperatures: Mapping[str, list[Observation]]  # from each patient's first such cycle to the week's end
    hcg_positives: tuple[HcgPositive, ...]
    hcg_entries: Mapping[str, list[Entry]]  # the whole record of each patient with a positive hCG


def charting_from(week: Week, protocol: Protocol) -> date:
    """How far back bleeds are read to find the cycles of the week: a longer one is amenorrhoea."""
    return week.first_day - timedelta(days=protocol.amenorrhoea_days)


def percentile(values: Sequence[float], q: float) -> float:
    """Linear interpolation between closest ranks (the 'inclusive' method)."""
    ordered = sorted(values)
    position = q * (len(ordered) - 1)
    low = math.floor(position)
    high = min(low + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (position - low)


def share(part: int, whole: int) -> float | None:
    return round(part / whole, 4) if whole else None


def compute(week: Week, data: WeekData, protocol: Protocol, prepared_on: date) -> WeeklySummary:
    refs = {pid: PatientRef(pid, p.name) for pid, p in data.patients.items()}

    def ref(patient_id: str) -> PatientRef:
        return refs.get(patient_id) or PatientRef(patient_id, None)

    in_week = [e for e in data.alert_history if week.contains(e.at)]
    nurses = [s.id for s in data.staff if s.role is Role.NURSE]
    return WeeklySummary(
        week=week,
        prepared_on=prepared_on,
        deidentified=False,
        census=census(data.at_start, data.at_end, nurses),
        alerts=alert_summary(week, data.alert_history, data.unresolved_at_start),
        clinical=clinical(week, in_week, data, protocol, ref),
        quality=quality(week, data, protocol.logging_gap_days, ref),
        workload=workload(week, data.staff, data.entries_logged, data.changes, in_week),
    )


# --- census


def _active(start: Mapping[str, PatientVersion], end: Mapping[str, PatientVersion],
            member: Callable[[PatientVersion], bool], label: str) -> ActiveCount:
    return ActiveCount(
        group=label,
        at_start=sum(1 for v in start.values() if v.status == ACTIVE and member(v)),
        at_end=sum(1 for v in end.values() if v.status == ACTIVE and member(v)),
        registered=sum(1 for pid, v in end.items() if pid not in start and member(v)),
    )


def _nurse(v: PatientVersion) -> str:
    return v.nurse_id or UNASSIGNED


def census(start: Mapping[str, PatientVersion], end: Mapping[str, PatientVersion], nurses: Sequence[str]) -> Census:
    statuses = tuple(
        StatusCount(s, sum(v.status == s for v in start.values()), sum(v.status == s for v in end.values()))
        for s in STATUSES
    )
    pairs = Counter((start[pid].status if pid in start else NEW, v.status) for pid, v in end.items())
    order = (NEW, *STATUSES)
    moves = tuple(
        StatusMove(f, t, n) for (f, t), n in sorted(pairs.items(), key=lambda i: (order.index(i[0][0]), order.index(i[0][1])))
    )

    def into(status: str) -> int:
        return sum(n for (f, t), n in pairs.items() if t == status and f != status)

    movement = (
        Movement("registered", sum(n for (f, _), n in pairs.items() if f == NEW)),
        Movement("discharged", into(PatientStatus.DISCHARGED.value)),
        Movement("paused", into(PatientStatus.PAUSED.value)),
        Movement("became pregnant", into(PatientStatus.PREGNANT.value)),
        Movement("returned to active", sum(n for (f, t), n in pairs.items() if t == ACTIVE and f not in (NEW, ACTIVE))),
    )
    seen = {_nurse(v) for v in (*start.values(), *end.values())}
    groups = [*nurses, *sorted(seen - set(nurses) - {UNASSIGNED})] + ([UNASSIGNED] if UNASSIGNED in seen else [])
    return Census(
        statuses=statuses,
        statuses_total=StatusCount(TOTAL, len(start), len(end)),
        moves=moves,
        movement=movement,
        by_plan=tuple(_active(start, end, lambda v, p=plan: v.plan == p, plan) for plan in PLANS),
        by_nurse=tuple(_active(start, end, lambda v, n=nurse: _nurse(v) == n, nurse) for nurse in groups),
        active_total=_active(start, end, lambda v: True, TOTAL),
    )


# --- alerts


def _ack_time(severity: str, hours: Sequence[float]) -> AckTime:
    if not hours:
        return AckTime(severity, 0, None, None)
    return AckTime(severity, len(hours), round(percentile(hours, 0.5), 2), round(percentile(hours, 0.9), 2))


def _state(event: AlertEvent, previous: str) -> str:
    return event.state or STATE_AFTER.get(event.action, previous)


def _alert_states(week: Week, history: Iterable[AlertEvent],
                  unresolved_at_start: Iterable[AlertEvent]) -> list[tuple[str, AlertEvent]]:
    """(state, last transition) at the week's end of every alert not resolved then.

    An alert touched in the week is replayed from its raising; any other keeps its state at the
    start. As in the queue, a snooze until a day that has come (by the week's last day) is open.
    """
    last = {e.alert_id: (_state(e, "open"), e) for e in unresolved_at_start}
    replayed: dict[str, tuple[str, AlertEvent]] = {}
    for e in history:  # oldest first
        previous = replayed[e.alert_id][0] if e.alert_id in replayed else "open"
        replayed[e.alert_id] = (_state(e, previous), e)
    last.update(replayed)
    states = []
    for state, e in last.values():
        if state == "snoozed" and e.snooze_until is not None and e.snooze_until <= week.last_day:
            state = "open"
        if state != "resolved":
            states.append((state, e))
    return states


def _week_end_row(severity: str, states: Sequence[tuple[str, AlertEvent]], week: Week) -> WeekEndAlerts:
    open_ = [e for state, e in states if state == "open"]
    return WeekEndAlerts(
        severity=severity,
        open=len(open_),
        past_due=sum(1 for e in open_ if e.due is not None and e.due <= week.last_day),
        acknowledged=sum(state == "acknowledged" for state, _ in states),
        snoozed=sum(state == "snoozed" for state, _ in states),
    )


def alert_summary(week: Week, history: Sequence[AlertEvent], unresolved_at_start: Sequence[AlertEvent]) -> AlertSummary:
    in_week = [e for e in history if week.contains(e.at)]
    raised = Counter((e.kind, e.severity) for e in in_week if e.action == RAISE)
    kinds = (*ALERT_KINDS, *sorted({k for k, _ in raised} - set(ALERT_KINDS)))
    rows = tuple(KindCount(k, tuple(raised[(k, s)] for s in SEVERITIES), sum(raised[(k, s)] for s in SEVERITIES))
                 for k in kinds)
    raised_total = KindCount(TOTAL, tuple(sum(r.by_severity[i] for r in rows) for i in range(len(SEVERITIES))),
                             sum(r.total for r in rows))
    actions = tuple(ActionCount(label, sum(e.action == action for e in in_week)) for action, label in ACTION_EVENTS.items())

    by_alert: dict[str, list[AlertEvent]] = defaultdict(list)
    for e in history:
        by_alert[e.alert_id].append(e)
    hours: dict[str, list[float]] = defaultdict(list)
    for events in by_alert.values():
        raising = next((e for e in events if e.action == RAISE), None)
        first_ack = next((e for e in events if e.action == ACK), None)
        if raising and first_ack and week.contains(first_ack.at):
            hours[first_ack.severity].append((first_ack.at - raising.at).total_seconds() / 3600)

    states = _alert_states(week, history, unresolved_at_start)
    week_end = tuple(_week_end_row(s, [(st, e) for st, e in states if e.severity == s], week) for s in SEVERITIES)
    return AlertSummary(
        raised=rows,
        raised_total=raised_total,
        actions=actions,
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
    )


# --- clinical events


def cycles_into_week(bleeds: Mapping[str, Sequence[Observation]], temperature_days: Mapping[str, Sequence[date]],
                     week: Week, protocol: Protocol) -> dict[str, list[CycleSpan]]:
    """Each patient's cycles, as of the week's end, that reach into the week.

    Only patients with a temperature in the week can have a shift confirmed in it, so only they
    are kept; their readings are then needed from the first such cycle's day 1, not from further back.
    """
    found = {}
    for pid in temperature_days:
        seen = [b for b in bleeds.get(pid, ()) if b.day <= week.last_day]
        spans = [s for s in cycle_spans(menstrual_bleeds(seen, protocol)) if s.end is None or s.end >= week.first_day]
        if spans:
            found[pid] = spans
    return found


def confirmed_shift(cycles: Sequence[CycleSpan], temperatures: Sequence[Observation], week: Week,
                    protocol: Protocol) -> date | None:
    """The day in the week a thermal shift was confirmed by the three-over-six rule, if one was."""
    for span, group in zip(cycles, group_by_cycle(list(temperatures), list(cycles))):
        readings = valid_readings(group)
        confirmed = three_over_six(readings, protocol).confirmed_at
        if confirmed is not None and week.first_day <= readings[confirmed].day <= week.last_day:
            return readings[confirmed].day
    return None


def event_order(e: ClinicalEvent) -> tuple:
    return (e.day, e.event, e.patient.id)


def pregnancy_order(p: PositiveHcg) -> tuple:
    return (p.tested_on, p.patient.id)


def count_events(events: Sequence[ClinicalEvent]) -> tuple[EventCount, ...]:
    counts = []
    for event, description, kinds in CLINICAL_EVENTS:
        names = set(kinds) or {event}
        counts.append(EventCount(event, description, len({e.patient.id for e in events if e.event in names})))
    return tuple(counts)


def clinical(week: Week, in_week: Sequence[AlertEvent], data: WeekData, protocol: Protocol,
             ref: Callable[[str], PatientRef]) -> Clinical:
    first_raised: dict[tuple[str, str], date] = {}
    for e in in_week:
        if e.action == RAISE and e.kind in EVENT_ALERT_KINDS:
            day = week.local_day(e.at)
            key = (e.patient_id, e.kind)
            first_raised[key] = min(day, first_raised.get(key, day))
    events = [ClinicalEvent(ref(pid), kind, day) for (pid, kind), day in first_raised.items()]
    for pid, temperatures in data.temperatures.items():
        confirmed = confirmed_shift(data.cycles[pid], temperatures, week, protocol)
        if confirmed is not None:
            events.append(ClinicalEvent(ref(pid), SHIFT_CONFIRMED, confirmed))
    pregnancies = []
    for positive in data.hcg_positives:
        # As of the test day: the cycle it belongs to dates the pregnancy.
        found = analyse(data.patients[positive.patient_id], observations(data.hcg_entries[positive.patient_id]),
                        positive.day, protocol).pregnancy
        pregnancies.append(PositiveHcg(ref(positive.patient_id), positive.day,
                                       found.edd if found else None, found.edd_method if found else None))
        events.append(ClinicalEvent(ref(positive.patient_id), HCG_POSITIVE, positive.day))
    return Clinical(
        counts=count_events(events),
        events=tuple(sorted(events, key=event_order)),
        pregnancies=tuple(sorted(pregnancies, key=pregnancy_order)),
    )


# --- data quality


def longest_gap(days: Sequence[date], logged: set[date]) -> int:
    longest = run = 0
    for day in days:
        run = 0 if day in logged else run + 1
        longest = max(longest, run)
    return longest


def gap_order(g: LoggingGap) -> tuple:
    return (-g.longest_gap, g.nurse, g.patient.id)


def count_reasons(changes: Sequence[Change]) -> tuple[tuple[ReasonCount, ...], ReasonCount]:
    tally: dict[str, Counter] = defaultdict(Counter)
    for c in changes:
        tally[c.reason][c.change] += 1
    rows = tuple(sorted((ReasonCount(r, n["correction"], n["void"]) for r, n in tally.items()),
                        key=lambda r: (-(r.corrections + r.voids), r.reason)))
    return rows, ReasonCount(TOTAL, sum(r.corrections for r in rows), sum(r.voids for r in rows))


def _coverage(nurse: str, logged_days: Sequence[int], week_days: int) -> Coverage:
    expected, logged = len(logged_days) * week_days, sum(logged_days)
    return Coverage(nurse, len(logged_days), expected, logged, share(logged, expected))


def quality(week: Week, data: WeekData, gap_days: int, ref: Callable[[str], PatientRef]) -> Quality:
    start, end = data.at_start, data.at_end
    # Patients on the caseload and charting the whole week: one temperature is expected each day.
    charting = sorted(
        pid for pid, v in end.items()
        if v.charting_temps and v.status == ACTIVE and pid in start and start[pid].status == ACTIVE
    )
    days = week.days
    logged = {pid: set(data.temperature_days.get(pid, ())) & set(days) for pid in charting}
    by_nurse: dict[str, list[int]] = defaultdict(list)
    for pid in charting:
        by_nurse[_nurse(end[pid])].append(len(logged[pid]))
    nurses = sorted(n for n in by_nurse if n != UNASSIGNED) + ([UNASSIGNED] if UNASSIGNED in by_nurse else [])
    gaps = [
        LoggingGap(ref(pid), _nurse(end[pid]), len(logged[pid]), longest_gap(days, logged[pid]))
        for pid in charting
    ]
    changes = tuple(
        Change(c.entry_id, ref(c.patient_id), c.kind, c.day, c.change, c.reason, c.by_staff, week.local(c.at))
        for c in data.changes
    )
    reasons, reasons_total = count_reasons(changes)
    return Quality(
        coverage=tuple(_coverage(n, by_nurse[n], len(days)) for n in nurses),
        coverage_total=_coverage(TOTAL, [len(logged[pid]) for pid in charting], len(days)),
        gap_days=gap_days,
        gaps=tuple(sorted((g for g in gaps if g.longest_gap >= gap_days), key=gap_order)),
        changes=changes,
        reasons=reasons,
        reasons_total=reasons_total,
    )


# --- workload


def workload(week: Week, staff: Sequence[Staff], counts: Sequence[EntryCount], changes: Sequence[EntryChange],
             in_week: Sequence[AlertEvent]) -> Workload:
    role_of = {s.id: s.role.value for s in staff}
    entries, corrections = Counter(), Counter()
    for c in counts:
        entries[c.staff_id] += c.entries
        corrections[c.staff_id] += c.corrections
    voids = Counter(c.by_staff for c in changes if c.change == "void")
    handled = Counter((e.by_staff, HANDLING[e.action]) for e in in_week if e.action in HANDLING)
    active = {*entries, *voids, *(who for who, _ in handled)}
    ids = [*role_of, *sorted(active - set(role_of))]
    roles = (*ROLES, UNKNOWN_ROLE) if active - set(role_of) else ROLES
    rows = []
    for sid in sorted(ids, key=lambda i: (roles.index(role_of.get(i, UNKNOWN_ROLE)), i)):
        ack, snooze, resolve = (handled[(sid, h)] for h in ("acknowledged", "snoozed", "resolved"))
        rows.append(StaffLoad(sid, role_of.get(sid, UNKNOWN_ROLE), entries[sid], corrections[sid], voids[sid],
                              ack, snooze, resolve, ack + snooze + resolve))

    def role_load(role: str, members: Sequence[StaffLoad]) -> RoleLoad:
        return RoleLoad(role, sum(m.entries for m in members), sum(m.corrections for m in members),
                        sum(m.voids for m in members), sum(m.handled for m in members))

    by_day = Counter()
    for c in counts:
        by_day[(c.day_index, role_of.get(c.staff_id, UNKNOWN_ROLE))] += c.entries
    days = tuple(
        DayLoad(day, tuple(by_day[(i, r)] for r in roles), sum(by_day[(i, r)] for r in roles))
        for i, day in enumerate(week.days)
    )
    return Workload(
        staff=tuple(rows),
        staff_total=StaffLoad(TOTAL, "", *(sum(getattr(r, f) for r in rows) for f in (
            "entries", "corrections", "voids", "acknowledged", "snoozed", "resolved", "handled"))),
        roles=tuple(role_load(r, [m for m in rows if m.role == r]) for r in roles),
        roles_total=role_load(TOTAL, rows),
        days=days,
        days_total=DayLoad(None, tuple(sum(d.by_role[i] for d in days) for i in range(len(roles))),
                           sum(d.total for d in days)),
    )
