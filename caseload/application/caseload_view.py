"""Reading the caseload: the morning list in triage order, and one patient's full record."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date

import pendulum

from caseload.core.alerts.lifecycle import effective
from caseload.core.analysis import Analysis
from caseload.core.model import Alert, AlertState, AlertStep, Entry, Patient, PatientStatus
from caseload.core.snapshot import Snapshot
from caseload.application.context import Context
from caseload.application.recompute import Refreshed, analyse_patient
from caseload.application.patients import get_patient
from caseload.application.staff import DEFAULT_TIMEZONE

NO_ALERT_RANK = 9


@dataclass(frozen=True)
class CaseloadLine:
    """One row of the morning list."""

    patient: Patient
    snapshot: Snapshot | None
    cycle_day: int | None
    alerts: tuple[Alert, ...]  # open alerts, most pressing first
    days_since_entry: int | None

    @property
    def top_alert(self) -> Alert | None:
        return self.alerts[0] if self.alerts else None

    def sort_key(self) -> tuple:
        top = self.top_alert
        return (
            top.severity.rank if top else NO_ALERT_RANK,
            top.due if top else date.max,
            self.cycle_day if self.cycle_day is not None else 10**6,
            self.patient.id,
        )


def pressing_first(alerts: list[Alert]) -> tuple[Alert, ...]:
    return tuple(sorted(alerts, key=lambda a: (a.severity.rank, a.due, a.id)))


def list_caseload(ctx: Context) -> list[CaseloadLine]:
    """Every patient under care (not discharged), most pressing first: alert severity, due day, cycle day."""
    ctx.require("caseload.view")
    under_care = [p for p in ctx.store.patients.all() if p.status is not PatientStatus.DISCHARGED]
    states = ctx.store.state.all()
    open_by_patient: dict[str, list[Alert]] = {}
    for stored in ctx.store.alerts.unresolved():
        a = effective(stored, ctx.today)  # a snooze whose day has come counts, even before a refresh
        if a.state is AlertState.OPEN:
            open_by_patient.setdefault(a.patient_id, []).append(a)
    lines = []
    for p in under_care:
        snap = states.get(p.id)
        lines.append(
            CaseloadLine(
                patient=p,
                snapshot=snap,
                cycle_day=snap.cycle_day(ctx.today) if snap else None,
                alerts=pressing_first(open_by_patient.get(p.id, [])),
                days_since_entry=snap.days_since_entry(ctx.today) if snap else None,
            )
        )
    return sorted(lines, key=CaseloadLine.sort_key)


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


def show_patient(ctx: Context, patient_id: str) -> PatientRecord:
    ctx.require("patient.show")
    patient = get_patient(ctx, patient_id)
    entries = ctx.store.entries.for_patient(patient.id)
    stored = ctx.store.alerts.for_patient(patient.id)
    alerts = [effective(a, ctx.today) for a in stored if a.state is not AlertState.RESOLVED]
    resolved = [a for a in reversed(stored) if a.state is AlertState.RESOLVED]
    zone = pendulum.timezone(ctx.store.meta("timezone") or DEFAULT_TIMEZONE)  # steps read in the clinic's time
    steps = tuple(replace(s, at=s.at.astimezone(zone)) for s in ctx.store.alerts.steps_for_patient(patient.id))
    return PatientRecord(patient, analyse_patient(ctx, patient, entries), pressing_first(alerts), tuple(entries),
                         tuple(resolved), steps)
