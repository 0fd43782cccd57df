"""Reading the caseload: the morning list in triage order, and one patient's full record."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date

from caseload.core.alerts import AlertKind, risk_rank, triage_key
from caseload.core.alerts.lifecycle import effective
from caseload.core.analysis import Analysis
from caseload.core.model import Alert, AlertState, AlertStep, Entry, Patient, PatientStatus
from caseload.core.snapshot import Snapshot, snapshot_of
from caseload.application.alert_handling import as_seen, caller_view_only, steps_as_seen
from caseload.application.context import Context
from caseload.application.recompute import Refreshed, analyse_patient
from caseload.application.patients import get_patient
from caseload.application.staff import DEFAULT_TIMEZONE, clinic_zone

NO_ALERT_RANK = 9


@dataclass(frozen=True)
class CaseloadLine:
    """One row of the morning list."""

    patient: Patient
    snapshot: Snapshot | None
    cycle_day: int | None
    alerts: tuple[Alert, ...]  # open alerts, most pressing first (the first is the row's)
    days_since_entry: int | None

    @property
    def top_alert(self) -> Alert | None:
        return self.alerts[0] if self.alerts else None

    def sort_key(self) -> tuple:
        top = self.top_alert
        return (
            top.severity.rank if top else NO_ALERT_RANK,
            risk_rank(top.kind) if top else NO_ALERT_RANK,
            top.due if top else date.max,
            self.cycle_day if self.cycle_day is not None else 10**6,
            self.patient.id,
        )


def pressing_first(alerts: list[Alert]) -> tuple[Alert, ...]:
    """Most severe first, and within a severity the most clinical risk first (never the most recent)."""
    return tuple(sorted(alerts, key=triage_key))


def listed(ctx: Context, patient: Patient) -> bool:
    """Under care (not discharged) and registered by the day under view: a view of an earlier day
    (`--today`) does not list a patient registered after it."""
    return patient.status is not PatientStatus.DISCHARGED and (patient.created is None or patient.created <= ctx.today)


def list_caseload(ctx: Context) -> list[CaseloadLine]:
    """Every patient under care (not discharged), most pressing first: her top alert's severity and
    clinical risk, its due day, then cycle day."""
    ctx.require("caseload.view")
    under_care = [p for p in ctx.store.patients.all() if listed(ctx, p)]
    states = ctx.store.state.all()
    unresolved: dict[str, list[Alert]] = {}
    for stored in ctx.store.alerts.unresolved():
        unresolved.setdefault(stored.patient_id, []).append(stored)
    lines = [caseload_line(ctx, p, states.get(p.id), unresolved.get(p.id, [])) for p in under_care]
    return sorted(lines, key=CaseloadLine.sort_key)


def registered_row(patient: Patient) -> CaseloadLine:
    """A newly registered patient's row: no entries, so no cycle day and no alerts yet."""
    return CaseloadLine(patient=patient, snapshot=None, cycle_day=None, alerts=(), days_since_entry=None)


def caseload_line(ctx: Context, patient: Patient, snap: Snapshot | None, unresolved: list[Alert]) -> CaseloadLine:
    """One patient's row as of the context's day, from her record, snapshot and unresolved alerts
    (as the acting staff member may see them)."""
    today = ctx.today
    if snap is not None and snap.computed_on > today:
        # A view of a day before the snapshot's (`--today`): the snapshot read entries dated after
        # that day, so the row is computed as `show` computes the record, from her entries up to the
        # day; a read-only view, so it is not kept.
        snap = snapshot_of(analyse_patient(ctx, patient))
    # A snooze whose day has come counts, even before a refresh; an alert raised after the day under
    # view is not shown in it.
    alerts = [as_seen(ctx, a) for a in (effective(stored, today) for stored in unresolved if stored.raised_on <= today)
              if a.state is AlertState.OPEN]
    return CaseloadLine(
        patient=patient,
        snapshot=snap,
        cycle_day=snap.cycle_day(today) if snap else None,
        alerts=pressing_first(alerts),
        days_since_entry=snap.days_since_entry(today) if snap else None,
    )


@dataclass(frozen=True)
class CaseloadRead:
    """The morning list and the store's list mark it is current to (see `caseload_since`)."""

    mark: int
    lines: tuple[CaseloadLine, ...]


REREAD_ALL_SHARE = 0.25  # past this share of the list changed, one read of everything is cheaper


def read_caseload(ctx: Context) -> CaseloadRead:
    mark = ctx.store.list_marks.latest()  # taken first: a change made during the read is read again next time
    return CaseloadRead(mark, tuple(list_caseload(ctx)))


def caseload_since(ctx: Context, mark: int, lines: tuple[CaseloadLine, ...]) -> CaseloadRead:
    """`lines` (the list as read at `mark`) brought up to date by reading again only the patients
    marked as changed since; the same tuple when none is."""
    ctx.require("caseload.view")
    latest, changed = ctx.store.list_marks.since(mark)
    if not changed:
        return CaseloadRead(mark, lines)
    if len(changed) > REREAD_ALL_SHARE * max(len(lines), 1):
        return read_caseload(ctx)
    fresh = []
    for patient_id in set(changed):
        patient = ctx.store.patients.get(patient_id)
        if patient is not None and listed(ctx, patient):
            unresolved = [a for a in ctx.store.alerts.for_patient(patient_id) if a.state is not AlertState.RESOLVED]
            fresh.append(caseload_line(ctx, patient, ctx.store.state.get(patient_id), unresolved))
    kept = [line for line in lines if line.patient.id not in set(changed)]
    return CaseloadRead(latest, tuple(sorted(kept + fresh, key=CaseloadLine.sort_key)))


@dataclass(frozen=True)
class PatientRecord:
    """Everything about one patient as of a day, for `show` and the interface's record screen."""

    patient: Patient
    analysis: Analysis
    alerts: tuple[Alert, ...]  # not resolved, most pressing first
    entries: tuple[Entry, ...]
    resolved: tuple[Alert, ...] = ()  # the history: resolved alerts, the latest raised first
    steps: tuple[AlertStep, ...] = ()  # what happened to each of the patient's alerts, oldest first

    def steps_of(self, alert_id: int) -> tuple[AlertStep, ...]:
        return tuple(s for s in self.steps if s.alert_id == alert_id)


def row_after(line: CaseloadLine, done: Refreshed, today: date) -> CaseloadLine:
    """A patient's list row after a save, from the snapshot and alerts the save returned: no read."""
    snap, raised = done.snapshot, {a.id: a for a in done.raised}
    alerts = [a for a in line.alerts if a.id not in raised] + list(raised.values())
    return replace(line, snapshot=snap, cycle_day=snap.cycle_day(today), alerts=pressing_first(alerts),
                   days_since_entry=snap.days_since_entry(today))


def analysis_as_seen(ctx: Context, analysis: Analysis) -> Analysis:
    """The analysis as it may leave the application for the acting staff member. The serum hCG
    trend (rise per 48 h, doubling time) is the evidence of an hcg-rise-low alert read as figures, so
    whoever gets that alert only as the caller's view (phone staff) gets no trend either: the
    pregnancy, its dates and the logged values stay, and every field does, so every JSON key does too."""
    if not caller_view_only(ctx.actor, AlertKind.HCG_RISE_LOW):
        return analysis
    pregnancy = None if analysis.pregnancy is None else replace(analysis.pregnancy, hcg_trend=None)
    return replace(analysis, pregnancy=pregnancy, hcg_trend=None)


def show_patient(ctx: Context, patient_id: str) -> PatientRecord:
    ctx.require("patient.show")
    patient = get_patient(ctx, patient_id)
    entries = ctx.store.entries.for_patient(patient.id)
    stored = ctx.store.alerts.for_patient(patient.id)
    alerts = [as_seen(ctx, effective(a, ctx.today)) for a in stored if a.state is not AlertState.RESOLVED]
    resolved = [as_seen(ctx, a) for a in reversed(stored) if a.state is AlertState.RESOLVED]
    zone = clinic_zone(ctx.store.meta("timezone") or DEFAULT_TIMEZONE)  # steps read in the clinic's time
    steps = steps_as_seen(ctx, stored, tuple(replace(s, at=s.at.astimezone(zone))
                                             for s in ctx.store.alerts.steps_for_patient(patient.id)))
    analysis = analysis_as_seen(ctx, analyse_patient(ctx, patient, entries))
    return PatientRecord(patient, analysis, pressing_first(alerts), tuple(entries), tuple(resolved), steps)
