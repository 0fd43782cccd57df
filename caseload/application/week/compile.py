"""The weekly summary, computed from what the store returned for the week: pure, no SQL, no clock.

SQL does the counting (store/reports.py); this module and its two neighbours, alert_summary.py
and clinical.py, only combine the counts into sections whose totals add up.
"""

from __future__ import annotations

from collections import Counter, defaultdict
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.cycles import CycleSpan
from caseload.core.model import Entry, Observation, Patient, PatientStatus, Plan, Role, Staff
from caseload.core.settings import Protocol
from caseload.application.week.alert_counts import HANDLING, alert_summary
from caseload.application.week.clinical_events import clinical
from caseload.application.week.figures import (
    TOTAL, UNASSIGNED, ActiveCount, Census, Change, Coverage, DayLoad, LoggingGap, Movement, NurseOutcomes,
    PatientRef, Quality, ReasonCount, RoleLoad, StaffLoad, StatusCount, StatusMove, WeeklySummary, Workload,
)
from caseload.application.week.period import Period
from caseload.store.summary_queries import AlertEvent, EntryChange, EntryCount, HcgPositive, PatientVersion

ROLES = tuple(r.value for r in Role)
STATUSES = tuple(s.value for s in PatientStatus)
PLANS = tuple(p.value for p in Plan)
NEW = "new"
UNKNOWN_ROLE = "unknown"
ACTIVE = PatientStatus.ACTIVE.value


@dataclass(frozen=True)
class WeekData:
    """Everything the store returned for the days of one week a summary covers (its `Period`)."""

    staff: tuple[Staff, ...]
    patients: Mapping[str, Patient]
    at_start: Mapping[str, PatientVersion]
    at_end: Mapping[str, PatientVersion]
    alert_history: tuple[AlertEvent, ...]  # alerts with a transition in the period, history up to its end
    unresolved_at_start: tuple[AlertEvent, ...]  # last transition before the week of each unresolved alert
    entries_logged: tuple[EntryCount, ...]
    changes: tuple[EntryChange, ...]
    temperature_days: Mapping[str, tuple[date, ...]]
    cycles: Mapping[str, list[CycleSpan]]  # see `clinical.cycles_into_week`
    temperatures: Mapping[str, list[Observation]]  # from each patient's first such cycle to the period's last day
    hcg_positives: tuple[HcgPositive, ...]
    hcg_entries: Mapping[str, list[Entry]]  # the whole record of each patient with a positive hCG


def charting_from(period: Period, protocol: Protocol) -> date:
    """How far back bleeds are read to find the cycles of the week: a longer one is amenorrhoea."""
    return period.first_day - timedelta(days=protocol.amenorrhoea_days)


def share(part: int, whole: int) -> float | None:
    return round(part / whole, 4) if whole else None


def compute(period: Period, data: WeekData, protocol: Protocol, prepared_on: date) -> WeeklySummary:
    """The summary of the days `period` covers (see period.covered), from what the store returned for them."""
    refs = {pid: PatientRef(pid, p.name) for pid, p in data.patients.items()}

    def ref(patient_id: str) -> PatientRef:
        return refs.get(patient_id) or PatientRef(patient_id, None)

    def nurse_of(patient_id: str) -> str:
        return _nurse(data.at_end[patient_id]) if patient_id in data.at_end else UNASSIGNED

    in_week = [e for e in data.alert_history if period.contains(e.at)]
    nurses = [s.id for s in data.staff if s.role is Role.NURSE]
    return WeeklySummary(
        week=period.week,
        last_day=period.last_day,
        prepared_on=prepared_on,
        complete=period.week.last_day < prepared_on,
        deidentified=False,
        census=census(data.at_start, data.at_end, nurses),
        alerts=alert_summary(period, data.alert_history, data.unresolved_at_start, nurse_of, ref),
        clinical=clinical(period, in_week, data.cycles, data.temperatures, data.hcg_positives,
                          {pid: (data.patients[pid], entries) for pid, entries in data.hcg_entries.items()},
                          protocol, ref, outcomes(in_week, data.at_start, data.at_end, nurses, nurse_of)),
        quality=quality(period, data, protocol.logging_gap_days, ref),
        workload=workload(period, data.staff, data.entries_logged, data.changes, in_week),
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


def _groups(nurses: Sequence[str], seen: set[str]) -> list[str]:
    """Every nurse on the staff list, then any other nurse seen, then unassigned patients if any."""
    return [*nurses, *sorted(seen - set(nurses) - {UNASSIGNED})] + ([UNASSIGNED] if UNASSIGNED in seen else [])


def census(start: Mapping[str, PatientVersion], end: Mapping[str, PatientVersion], nurses: Sequence[str]) -> Census:
    statuses = tuple(
        StatusCount(s, sum(v.status == s for v in start.values()), sum(v.status == s for v in end.values()))
        for s in STATUSES
    )
    pairs = Counter((start[pid].status if pid in start else NEW, v.status) for pid, v in end.items())
    order = {status: i for i, status in enumerate((NEW, *STATUSES))}
    moves = tuple(StatusMove(f, t, n) for (f, t), n in sorted(pairs.items(), key=lambda i: (order[i[0][0]], order[i[0][1]])))

    def into(status: str) -> int:
        return sum(n for (f, t), n in pairs.items() if t == status and f != status)

    movement = (
        Movement("registered", sum(n for (f, _), n in pairs.items() if f == NEW)),
        Movement("discharged", into(PatientStatus.DISCHARGED.value)),
        Movement("paused", into(PatientStatus.PAUSED.value)),
        Movement("became pregnant", into(PatientStatus.PREGNANT.value)),
        Movement("returned to active", sum(n for (f, t), n in pairs.items() if t == ACTIVE and f not in (NEW, ACTIVE))),
    )
    groups = _groups(nurses, {_nurse(v) for v in (*start.values(), *end.values())})
    return Census(
        statuses=statuses,
        statuses_total=StatusCount(TOTAL, len(start), len(end)),
        moves=moves,
        movement=movement,
        by_plan=tuple(_active(start, end, lambda v, p=plan: v.plan == p, plan) for plan in PLANS),
        by_nurse=tuple(_active(start, end, lambda v, n=nurse: _nurse(v) == n, nurse) for nurse in groups),
        active_total=_active(start, end, lambda v: True, TOTAL),
    )


# --- outcomes by nurse


REFERRAL_KIND = "irregular-cycles"  # acted on, it is a referral (FIGO: investigate irregular cycles)
ACTED_ON = ("alert.ack", "alert.resolve")


def outcomes(in_week: Sequence[AlertEvent], start: Mapping[str, PatientVersion], end: Mapping[str, PatientVersion],
             nurses: Sequence[str], nurse_of: Callable[[str], str]) -> tuple[tuple[NurseOutcomes, ...], NurseOutcomes]:
    """Referrals made and pregnancies confirmed in the week, by the patient's nurse at its end."""
    referred = {e.alert_id: e.patient_id for e in in_week if e.kind == REFERRAL_KIND and e.action in ACTED_ON}
    referrals = Counter(nurse_of(pid) for pid in referred.values())
    pregnant = PatientStatus.PREGNANT.value
    pregnancies = Counter(nurse_of(pid) for pid, v in end.items()
                          if v.status == pregnant and (pid not in start or start[pid].status != pregnant))
    rows = tuple(NurseOutcomes(n, referrals[n], pregnancies[n]) for n in _groups(nurses, {*referrals, *pregnancies}))
    return rows, NurseOutcomes(TOTAL, sum(r.referrals for r in rows), sum(r.pregnancies for r in rows))


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


def quality(period: Period, data: WeekData, gap_days: int, ref: Callable[[str], PatientRef]) -> Quality:
    start, end = data.at_start, data.at_end
    # Patients on the caseload and charting the whole period: one temperature is expected each day of it.
    charting = sorted(
        pid for pid, v in end.items()
        if v.charting_temps and v.status == ACTIVE and pid in start and start[pid].status == ACTIVE
    )
    days = period.days
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
        Change(c.entry_id, ref(c.patient_id), c.kind, c.day, c.change, c.reason, c.by_staff, period.local(c.at))
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


def workload(period: Period, staff: Sequence[Staff], counts: Sequence[EntryCount], changes: Sequence[EntryChange],
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
        for i, day in enumerate(period.days)
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
