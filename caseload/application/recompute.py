"""Recomputing a patient's derived state and alerts: after each write, and for the whole caseload.

The whole-caseload refresh computes outside any write transaction, then writes a few patients per
short transaction, so a clerk's log never waits long behind it. Each patient's snapshot and alerts
are written together: a refresh killed half way leaves every patient refreshed or as she was. A
patient changed between the compute and the write (a log, an alert handled, another refresh) is
recomputed inside the write, so two refreshes at once, or a refresh and a log, never store stale work.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from caseload.core.alerts.lifecycle import SyncPlan
from caseload.core.analysis import Analysis, analyse
from caseload.core.model import Alert, Entry, Observation, Patient, observations
from caseload.core.snapshot import Snapshot, snapshot_of
from caseload.application.alert_sync import apply_plan, plan_alerts, sync_alerts
from caseload.application.context import Context
from caseload.application.errors import Refused

# Patients written per transaction: each takes a few milliseconds, so a writer queued behind one
# batch waits tens of milliseconds, while the caseload is not fsynced patient by patient.
BATCH_PATIENTS = 16

# progress(stage, done, total): stage "computed" while reading and computing, then "written".
Progress = Callable[[str, int, int], None]


@dataclass(frozen=True)
class Refreshed:
    """A patient's state after a recompute, and the alerts it raised or escalated."""

    snapshot: Snapshot
    raised: tuple[Alert, ...]

    def summary(self) -> str:
        day = self.snapshot.cycle_day(self.snapshot.computed_on)
        text = f"Cycle day {day} ({self.snapshot.phase})." if day else f"No cycle start yet ({self.snapshot.phase})."
        if self.raised:
            text += " Raised: " + "; ".join(f"{a.kind} ({a.severity.value})" for a in self.raised) + "."
        return text


@dataclass(frozen=True)
class RefreshReport:
    patients: int
    raised: int
    resolved: int


@dataclass(frozen=True)
class PatientWork:
    """One patient's refresh as computed outside the write, with the change mark it was computed at."""

    patient: Patient
    mark: str | None
    snapshot: Snapshot
    plan: SyncPlan


@dataclass(frozen=True)
class RefreshPlan:
    """The whole caseload's refresh, computed and checked, not yet written."""

    patients: int
    work: tuple[PatientWork, ...]  # only the patients with something to write

    @property
    def resolutions(self) -> int:
        return sum(len(w.plan.resolutions) for w in self.work)


def analyse_patient(ctx: Context, patient: Patient, entries: list[Entry] | None = None) -> Analysis:
    if entries is None:
        entries = ctx.store.entries.for_patient(patient.id)
    return analyse(patient, observations(entries), ctx.today, ctx.protocol)


def _recompute(ctx: Context, patient: Patient, seen: list[Observation]) -> tuple[Snapshot, list[Alert], int]:
    analysis = analyse(patient, seen, ctx.today, ctx.protocol)
    snap = snapshot_of(analysis)
    ctx.store.state.put(snap)
    raised, resolved = sync_alerts(ctx, patient, analysis, seen)
    return snap, raised, resolved


def refresh_patient(ctx: Context, patient: Patient) -> Refreshed:
    """Inside the caller's write transaction: the patient's snapshot and alerts, brought up to date."""
    snap, raised, _ = _recompute(ctx, patient, ctx.store.entries.observations_for(patient.id))
    return Refreshed(snap, tuple(raised))


def plan_refresh(ctx: Context, progress: Progress | None = None) -> RefreshPlan:
    """Every patient as of ctx.today, computed in one pass over the entries; writes nothing.
    Refused when it would auto-resolve too many alerts at once (see `check_mass_resolve`)."""
    ctx.require("alert.refresh")
    # Marks first: whatever changes after this read is seen as changed at write time.
    marks = ctx.store.patients.change_marks()
    patients = {p.id: p for p in ctx.store.patients.all()}
    stored = ctx.store.state.all()
    work: list[PatientWork] = []

    def compute(patient: Patient, seen: list[Observation]) -> None:
        analysis = analyse(patient, seen, ctx.today, ctx.protocol)
        snap = snapshot_of(analysis)
        plan = plan_alerts(ctx, patient, analysis, seen)
        before = stored.get(patient.id)
        if not plan.empty or before is None or before.to_dict() != snap.to_dict():
            work.append(PatientWork(patient, marks.get(patient.id), snap, plan))
        if progress is not None:
            progress("computed", len(patients) - len(unseen), len(patients))

    unseen = dict(patients)
    # Streamed patient by patient: the caseload's entries are never all in memory at once.
    for patient_id, seen in ctx.store.entries.observations_by_patient():
        if patient_id in unseen:  # a patient added after the list was read waits for the next refresh
            compute(unseen.pop(patient_id), seen)
    for patient_id in list(unseen):
        compute(unseen.pop(patient_id), [])
    found = RefreshPlan(len(patients), tuple(work))
    check_mass_resolve(ctx, found.resolutions)
    return found


def check_mass_resolve(ctx: Context, resolutions: int) -> None:
    """Refuse a refresh that would auto-resolve more than the protocol's share of the unresolved
    alerts at once: a wrong date, a wrong protocol or a damaged store looks exactly like that."""
    p = ctx.protocol
    unresolved = ctx.store.alerts.count_unresolved()
    if resolutions >= p.mass_resolve_min and resolutions > p.mass_resolve_share * unresolved:
        raise Refused(
            f"refresh stopped: it would auto-resolve {resolutions} of the {unresolved} unresolved alerts at once "
            f"(more than {p.mass_resolve_share:.0%}, protocol mass_resolve_share), which a wrong date, a wrong "
            "protocol or a damaged store would also do: nothing was written; check the date and the protocol"
        )


def _write_patient(ctx: Context, w: PatientWork) -> tuple[int, int]:
    """Inside the batch's write: the computed state, or a fresh recompute when she changed meanwhile."""
    pid = w.patient.id
    if ctx.store.patients.change_marks(pid).get(pid) != w.mark:
        patient = ctx.store.patients.get(pid)
        _, raised, resolved = _recompute(ctx, patient, ctx.store.entries.observations_for(pid))
        return len(raised), resolved
    ctx.store.state.put(w.snapshot)
    return len(apply_plan(ctx, w.plan)), len(w.plan.resolutions)


def write_refresh(ctx: Context, found: RefreshPlan, progress: Progress | None = None) -> RefreshReport:
    """Write a computed refresh a few patients per short transaction."""
    raised = resolved = done = 0
    for first in range(0, len(found.work), BATCH_PATIENTS):
        batch = found.work[first : first + BATCH_PATIENTS]
        counts = ctx.store.transact(lambda: [_write_patient(ctx, w) for w in batch])  # noqa: B023 - run at once
        raised += sum(c[0] for c in counts)
        resolved += sum(c[1] for c in counts)
        done += len(batch)
        if progress is not None:
            progress("written", done, len(found.work))
    return RefreshReport(found.patients, raised, resolved)


def refresh_all(ctx: Context, progress: Progress | None = None) -> RefreshReport:
    """Every patient as of ctx.today: computed outside any write, then written in short
    transactions. Idempotent; safe to run twice at once and to interrupt."""
    return write_refresh(ctx, plan_refresh(ctx, progress), progress)
