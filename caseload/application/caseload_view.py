"""Reading the caseload: the morning list in triage order, and one patient's full record."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from caseload.core.alerts.lifecycle import effective
from caseload.core.analysis import Analysis, analysis_json
from caseload.core.model import Alert, AlertState, Entry, Patient, PatientStatus
from caseload.core.snapshot import Snapshot
from caseload.application.context import Context
from caseload.application.recompute import analyse_patient
from caseload.application.patients import get_patient

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

    def to_json(self) -> dict:
        s, top = self.snapshot, self.top_alert
        return {
            "patient": self.patient.id,
            "name": self.patient.name,
            "nurse": self.patient.nurse_id,
            "plan": self.patient.plan.value,
            "status": self.patient.status.value,
            "cycle_day": self.cycle_day,
            "phase": s.phase if s else None,
            "fertile_window": [d.isoformat() for d in s.fertile_window] if s and s.fertile_window else None,
            "shift_confirmed_on": s.shift_confirmed_on.isoformat() if s and s.shift_confirmed_on else None,
            "next_event": s.next_event if s else None,
            "next_event_day": s.next_event_day.isoformat() if s and s.next_event_day else None,
            "top_alert": None if top is None else alert_brief(top),
            "more_alerts": max(0, len(self.alerts) - 1),
            "days_since_entry": self.days_since_entry,
        }


def alert_brief(a: Alert) -> dict:
    return {"id": a.id, "kind": a.kind, "severity": a.severity.value, "state": a.state.value,
            "due": a.due.isoformat(), "message": a.message}


def pressing_first(alerts: list[Alert]) -> tuple[Alert, ...]:
    return tuple(sorted(alerts, key=lambda a: (a.severity.rank, a.due, a.id)))


def list_caseload(ctx: Context, nurse: str | None = None) -> list[CaseloadLine]:
    """Every patient under care (not discharged), most pressing first: alert severity, due day, cycle day."""
    ctx.require("caseload.view")
    under_care = [
        p for p in ctx.store.patients.all()
        if p.status is not PatientStatus.DISCHARGED and (not nurse or p.nurse_id == nurse)
    ]
    states = ctx.store.state.all([p.id for p in under_care] if nurse else None)
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
    alerts: tuple[Alert, ...]
    entries: tuple[Entry, ...]

    def to_json(self) -> dict:
        p = self.patient
        return {
            "patient": p.id,
            "name": p.name,
            "born": p.born.isoformat(),
            "nurse": p.nurse_id,
            "status": p.status.value,
            "plan": p.plan.value,
            **analysis_json(self.analysis),
            "alerts": [alert_brief(a) for a in self.alerts],
        }


def show_patient(ctx: Context, patient_id: str) -> PatientRecord:
    ctx.require("patient.show")
    patient = get_patient(ctx, patient_id)
    entries = ctx.store.entries.for_patient(patient.id)
    alerts = [effective(a, ctx.today) for a in ctx.store.alerts.for_patient(patient.id) if a.state is not AlertState.RESOLVED]
    return PatientRecord(patient, analyse_patient(ctx, patient, entries), pressing_first(alerts), tuple(entries))
