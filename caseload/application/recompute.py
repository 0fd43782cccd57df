"""Recomputing a patient's derived state and alerts: after each write, and for the whole caseload."""

from __future__ import annotations

from dataclasses import dataclass

from caseload.core.analysis import Analysis, analyse
from caseload.core.model import Alert, Entry, Observation, Patient, observations
from caseload.core.snapshot import Snapshot, snapshot_of
from caseload.application.alert_sync import sync_alerts
from caseload.application.context import Context


@dataclass(frozen=True)
class Refreshed:
    """A patient's state after a recompute, and the alerts it raised or escalated."""

    snapshot: Snapshot
    raised: tuple[Alert, ...]


@dataclass(frozen=True)
class RefreshReport:
    patients: int
    raised: int
    resolved: int


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


def refresh_all(ctx: Context) -> RefreshReport:
    """Every patient as of ctx.today, in one pass over the entries and one transaction. Idempotent."""
    ctx.require("alert.refresh")
    with ctx.store.atomic(ctx.today):
        patients = {p.id: p for p in ctx.store.patients.all()}
        raised = resolved = 0
        unseen = dict(patients)
        # Streamed patient by patient: the caseload's entries are never all in memory at once.
        for patient_id, seen in ctx.store.entries.observations_by_patient():
            _, new, gone = _recompute(ctx, unseen.pop(patient_id), seen)
            raised, resolved = raised + len(new), resolved + gone
        for patient in unseen.values():
            _, new, gone = _recompute(ctx, patient, [])
            raised, resolved = raised + len(new), resolved + gone
        return RefreshReport(len(patients), raised, resolved)
