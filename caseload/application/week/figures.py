"""The weekly summary as typed records: computed once, then rendered in every format.

Totals are part of the summary (not worked out by a renderer), so every format shows the same
numbers. Patients appear as `PatientRef`s, which de-identification replaces in one place.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime

from caseload.application.week.iso_weeks import Week

UNASSIGNED = "unassigned"
TOTAL = "total"  # the label of a total row


@dataclass(frozen=True)
class PatientRef:
    id: str  # the patient id, or a keyed pseudonym once de-identified
    name: str | None  # None once de-identified


# --- census


@dataclass(frozen=True)
class StatusCount:
    status: str
    at_start: int
    at_end: int


@dataclass(frozen=True)
class StatusMove:
    """Patients whose status was `from_status` at the week's start ('new' if not yet registered)
    and `to_status` at its end."""

    from_status: str
    to_status: str
    patients: int


@dataclass(frozen=True)
class Movement:
    measure: str
    patients: int


@dataclass(frozen=True)
class ActiveCount:
    """Active patients in one group (a plan or a nurse) at the week's start and end."""

    group: str
    at_start: int
    at_end: int
    registered: int  # registered during the week, whatever their status at its end


@dataclass(frozen=True)
class Census:
    statuses: tuple[StatusCount, ...]
    statuses_total: StatusCount
    moves: tuple[StatusMove, ...]
    movement: tuple[Movement, ...]
    by_plan: tuple[ActiveCount, ...]
    by_nurse: tuple[ActiveCount, ...]
    active_total: ActiveCount


# --- alerts


@dataclass(frozen=True)
class KindCount:
    kind: str
    by_severity: tuple[int, ...]  # in SEVERITIES order
    total: int


@dataclass(frozen=True)
class ActionCount:
    event: str
    count: int


@dataclass(frozen=True)
class AckTime:
    """Hours from an alert's raising to its first acknowledgement, for those acknowledged this week."""

    severity: str
    acknowledged: int
    median_hours: float | None
    p90_hours: float | None


@dataclass(frozen=True)
class WeekEndAlerts:
    """Alerts not resolved at the week's end, by their severity then."""

    severity: str
    open: int
    past_due: int  # open, with a due day on or before the last day covered
    acknowledged: int
    snoozed: int


@dataclass(frozen=True)
class OpenAlert:
    """An urgent or today alert not resolved at the week's end, under its patient's nurse then."""

    nurse: str
    patient: PatientRef
    kind: str
    severity: str
    state: str  # open, acknowledged or snoozed
    raised_on: date | None  # None once de-identified if raised before the week (see pseudonyms.py)
    age_days: int | None  # from its raising to the last day covered; None wherever raised_on is


@dataclass(frozen=True)
class AlertNote:
    """What a staff member wrote on acknowledging or resolving an urgent alert in the week."""

    patient: PatientRef
    kind: str
    action: str  # acknowledged or resolved
    by_staff: str
    at: datetime  # clinic local time
    note: str


@dataclass(frozen=True)
class AlertSummary:
    raised: tuple[KindCount, ...]
    raised_total: KindCount
    actions: tuple[ActionCount, ...]
    ack_times: tuple[AckTime, ...]
    ack_all: AckTime
    week_end: tuple[WeekEndAlerts, ...]
    week_end_total: WeekEndAlerts
    open_at_end: tuple[OpenAlert, ...]  # urgent and today, by nurse, oldest first
    urgent_notes: tuple[AlertNote, ...]


# --- clinical events


@dataclass(frozen=True)
class EventCount:
    event: str
    description: str
    patients: int


@dataclass(frozen=True)
class ClinicalEvent:
    patient: PatientRef
    event: str
    day: date


@dataclass(frozen=True)
class PositiveHcg:
    patient: PatientRef
    tested_on: date
    edd: date | None  # None once de-identified: a due date is months past the week
    edd_method: str | None  # "naegele" or "ovulation", as the core dated it; None with the due date


@dataclass(frozen=True)
class NurseOutcomes:
    """What came of a nurse's caseload in the week (the patient's nurse at the week's end)."""

    nurse: str
    referrals: int  # irregular-cycles alerts acted on (acknowledged or resolved) in the week
    pregnancies: int  # patients whose status became pregnant in the week


@dataclass(frozen=True)
class Clinical:
    counts: tuple[EventCount, ...]
    events: tuple[ClinicalEvent, ...]
    pregnancies: tuple[PositiveHcg, ...]
    outcomes: tuple[NurseOutcomes, ...]
    outcomes_total: NurseOutcomes


# --- data quality


@dataclass(frozen=True)
class Coverage:
    """Daily temperatures of patients charting all week: expected is one a patient for each day covered."""

    nurse: str
    patients: int
    expected: int
    logged: int
    share: float | None  # logged / expected, 4 decimals


@dataclass(frozen=True)
class LoggingGap:
    patient: PatientRef
    nurse: str
    days_logged: int
    longest_gap: int  # consecutive days of the week without a temperature


@dataclass(frozen=True)
class Change:
    entry_id: int
    patient: PatientRef
    kind: str
    day: date | None  # the changed entry's day; None once de-identified if outside the days covered
    change: str  # "correction" or "void"
    reason: str
    by_staff: str
    at: datetime  # clinic local time


@dataclass(frozen=True)
class ReasonCount:
    reason: str
    corrections: int
    voids: int


@dataclass(frozen=True)
class Quality:
    coverage: tuple[Coverage, ...]
    coverage_total: Coverage
    gap_days: int  # the protocol's logging gap
    gaps: tuple[LoggingGap, ...]
    changes: tuple[Change, ...]
    reasons: tuple[ReasonCount, ...]
    reasons_total: ReasonCount


# --- workload


@dataclass(frozen=True)
class StaffLoad:
    staff_id: str
    role: str
    entries: int  # every entry logged, corrections included
    corrections: int
    voids: int
    acknowledged: int
    snoozed: int
    resolved: int
    handled: int  # acknowledged + snoozed + resolved


@dataclass(frozen=True)
class RoleLoad:
    role: str
    entries: int
    corrections: int
    voids: int
    handled: int


@dataclass(frozen=True)
class DayLoad:
    day: date | None  # None on the total row
    by_role: tuple[int, ...]  # in ROLES order
    total: int


@dataclass(frozen=True)
class Workload:
    staff: tuple[StaffLoad, ...]
    staff_total: StaffLoad
    roles: tuple[RoleLoad, ...]
    roles_total: RoleLoad
    days: tuple[DayLoad, ...]
    days_total: DayLoad


@dataclass(frozen=True)
class WeeklySummary:
    week: Week
    last_day: date  # the last day the figures cover: the week's Sunday, or the day prepared as of if earlier
    prepared_on: date
    complete: bool  # False while the week is still in progress on the day it was prepared
    deidentified: bool
    census: Census
    alerts: AlertSummary
    clinical: Clinical
    quality: Quality
    workload: Workload
