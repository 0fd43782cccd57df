"""Recomputing a patient's derived state and alerts: after each write, and for the whole caseload.

A patient is analysed from her kept completed cycles and the open cycle's entries alone while the
kept cycles are current (`core.closed_cycles`, `store.closed_cycle_table`), else from every entry;
either way the cycles completed since are kept in the same write as her snapshot.

The whole-caseload refresh computes outside any write transaction (a large caseload in several
processes at once), then writes a few patients per short transaction, so a clerk's log never waits long behind it. Each patient's snapshot and alerts
are written together: a refresh killed half way leaves every patient refreshed or as she was. A
patient changed between the compute and the write (a log, an alert handled, another refresh) is
seen by her change mark inside the write and computed again, so two refreshes at once, or a refresh
and a log, never store stale work. A refresh that would auto-resolve too many alerts at once writes
nothing (`check_mass_resolve`).
"""

from __future__ import annotations

import gc
import multiprocessing
import os
import time
from collections.abc import Callable, Iterator
from concurrent.futures import ProcessPoolExecutor
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date
from functools import partial
from pathlib import Path

from caseload.core.alerts.lifecycle import SyncPlan
from caseload.core.analysis import Analysis, analyse
from caseload.core.closed_cycles import ClosedCycle, closed_cycles, kept_key, resume, rule_observations
from caseload.core.model import Actor, Alert, Entry, Observation, Patient, observations
from caseload.core.settings import Protocol
from caseload.core.snapshot import Snapshot, snapshot_of
from caseload.application.alert_sync import apply_plan, plan_alerts, sync_alerts
from caseload.application.context import Context
from caseload.application.errors import Refused
from caseload.store import Store

# Patients written per transaction: each takes a few milliseconds, so a writer queued behind one
# batch waits tens of milliseconds, while the caseload is not fsynced patient by patient.
BATCH_PATIENTS = 8
# After each batch the refresh pauses this share of the batch's own time. A writer queued on the
# lock is woken by SQLite's busy handler at growing intervals; a refresh that took the lock again at
# once would make it miss the lock batch after batch.
PAUSE_SHARE = 1.0
# Writes of one patient before the last, which recomputes her inside the write.
WRITE_TRIES = 3
# A caseload of this many patients is computed by several processes at once, one per processor
# (up to COMPUTE_PROCESSES), each reading the store on a connection of its own. A smaller one is
# computed here: starting the processes costs about half a second, 400 patients' worth of work.
PARALLEL_FROM_PATIENTS = 500
COMPUTE_PROCESSES = 4
# Patients per share handed to a process: few enough that the processes finish together and the
# progress moves, enough that sending each share costs little beside computing it.
SHARE_PATIENTS = 50

# progress(stage, done, total): stage "computed" while reading and computing, then "written".
Progress = Callable[[str, int, int], None]


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


@dataclass(frozen=True)
class Computed:
    """A patient's analysis, the observations the alert rules read with it, and the completed
    cycles to keep: after those kept (`replace` False), or instead of them."""

    analysis: Analysis
    rule_obs: list[Observation]
    keep: tuple[ClosedCycle, ...]
    replace: bool

    @property
    def writes_kept(self) -> bool:
        return bool(self.keep) or self.replace


@dataclass(frozen=True)
class PatientWork:
    """One patient's refresh as computed outside the write, with the change mark it was computed
    at: only what the write needs, so a morning's refresh holds no analyses while it writes."""

    patient: Patient
    mark: int | None
    snapshot: Snapshot
    plan: SyncPlan
    keep: tuple[ClosedCycle, ...]
    replace: bool

    @property
    def writes_kept(self) -> bool:
        return bool(self.keep) or self.replace


@dataclass(frozen=True)
class RefreshPlan:
    """The whole caseload's refresh, computed and checked, not yet written."""

    patients: int
    work: tuple[PatientWork, ...]  # only the patients with something to write

    @property
    def vanishing(self) -> int:
        return sum(w.plan.vanishing for w in self.work)


def analyse_patient(ctx: Context, patient: Patient, entries: list[Entry] | None = None) -> Analysis:
    if entries is None:
        entries = ctx.store.entries.for_patient(patient.id)
    return analyse(patient, observations(entries), ctx.today, ctx.protocol)


def compute(ctx: Context, patient: Patient) -> Computed:
    """The patient as of ctx.today: resumed from her kept cycles and the open cycle's entries when
    they are current and the chart allows it, else from every entry."""
    kept = ctx.store.closed_cycles.current(patient.id, kept_key(ctx.protocol))
    if kept:
        open_obs = ctx.store.entries.observations_from(patient.id, kept[-1].next_start)
        analysis = resume(patient, kept, open_obs, ctx.today, ctx.protocol)
        if analysis is not None:
            return Computed(analysis, rule_observations(kept, open_obs),
                            closed_cycles(analysis, open_obs, kept, ctx.protocol), replace=False)  # fmt: skip
    # Kept cycles that are stale (None) or cannot be resumed from are replaced in the same write.
    return compute_whole(ctx, patient, ctx.store.entries.observations_for(patient.id), replace=kept != ())


def compute_whole(ctx: Context, patient: Patient, seen: list[Observation], replace: bool = True) -> Computed:
    """The patient from every observation (`seen`); `replace` drops what was kept of her before."""
    analysis = analyse(patient, seen, ctx.today, ctx.protocol)
    return Computed(analysis, seen, closed_cycles(analysis, seen, (), ctx.protocol), replace)


def _keep(ctx: Context, patient_id: str, keep: tuple[ClosedCycle, ...], replace: bool) -> None:
    """Inside the caller's write: her completed cycles as computed (from the entries as they are)."""
    if replace:
        ctx.store.closed_cycles.drop(patient_id)
    ctx.store.closed_cycles.keep(patient_id, keep, kept_key(ctx.protocol))


def _recompute(ctx: Context, patient: Patient, done: Computed) -> tuple[Snapshot, list[Alert], int]:
    snap = snapshot_of(done.analysis)
    ctx.store.state.put(snap)
    if done.writes_kept:
        _keep(ctx, patient.id, done.keep, done.replace)
    raised, resolved = sync_alerts(ctx, patient, done.analysis, done.rule_obs)
    return snap, raised, resolved


def refresh_patient(ctx: Context, patient: Patient) -> Refreshed:
    """Inside the caller's write transaction: the patient's snapshot and alerts, brought up to date."""
    snap, raised, _ = _recompute(ctx, patient, compute(ctx, patient))
    return Refreshed(snap, tuple(raised))


def _compute(ctx: Context, patient: Patient, mark: int | None) -> PatientWork:
    """Outside any write: the patient's snapshot and alert plan, with the mark read before her entries."""
    done = compute(ctx, patient)
    plan = plan_alerts(ctx, patient, done.analysis, done.rule_obs)
    return PatientWork(patient, mark, snapshot_of(done.analysis), plan, done.keep, done.replace)


def _compute_again(ctx: Context, patient_id: str) -> PatientWork:
    """A patient who changed after her compute, computed afresh (mark first, as in the whole pass)."""
    mark = ctx.store.list_marks.of(patient_id).get(patient_id)
    return _compute(ctx, ctx.store.patients.get(patient_id), mark)


def plan_refresh(ctx: Context, progress: Progress | None = None) -> RefreshPlan:
    """Every patient as of ctx.today, each from her kept cycles and open cycle (`compute`); writes nothing.
    Refused when it would auto-resolve too many alerts at once (see `check_mass_resolve`)."""
    ctx.require("alert.refresh")
    # Marks first: whatever changes after this read is seen as changed at write time.
    marks = ctx.store.list_marks.of()
    patients = ctx.store.patients.all()
    stored = ctx.store.state.all()
    work: list[PatientWork] = []
    for number, done in enumerate(_computed(ctx, patients, marks), start=1):
        before = stored.get(done.patient.id)
        changed = before is None or before.to_dict() != done.snapshot.to_dict()
        if not done.plan.empty or changed or done.writes_kept:
            work.append(done)
        if progress is not None:
            progress("computed", number, len(patients))
    found = RefreshPlan(len(patients), tuple(work))
    check_mass_resolve(ctx, found.vanishing)
    return found


def _computed(ctx: Context, patients: list[Patient], marks: dict[str, int]) -> Iterator[PatientWork]:
    """Each patient's work (`_compute`), in the order of `patients`: here, or for a large caseload
    by several processes at once."""
    processes = min(_processors(), COMPUTE_PROCESSES)
    if len(patients) < PARALLEL_FROM_PATIENTS or processes < 2:
        with _long_lived_objects_set_aside():
            for patient in patients:
                yield _compute(ctx, patient, marks.get(patient.id))
        return
    shares = [[(p, marks.get(p.id)) for p in patients[i : i + SHARE_PATIENTS]]
              for i in range(0, len(patients), SHARE_PATIENTS)]  # fmt: skip
    # Spawned, not forked: the interface calls this from a worker thread, and a fork copies only
    # the thread that made it, with whatever locks the others held.
    with ProcessPoolExecutor(processes, mp_context=multiprocessing.get_context("spawn")) as pool:
        for share in pool.map(partial(_compute_share, ctx.store.path, ctx.actor, ctx.today, ctx.protocol), shares):
            yield from share


def _compute_share(
    path: Path, actor: Actor, today: date, protocol: Protocol, share: list[tuple[Patient, int | None]]
) -> list[PatientWork]:
    """In a compute process: these patients' work, read on a connection of its own. The protocol
    comes from the caller, so every share is computed under the one the refresh began with."""
    with Store(path) as store, _long_lived_objects_set_aside():
        ctx = Context(store, actor, today, protocol)
        return [_compute(ctx, patient, mark) for patient, mark in share]


def _processors() -> int:
    """The processors this process may run on (a container or CI may allow fewer than the machine has)."""
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1


@contextmanager
def _long_lived_objects_set_aside() -> Iterator[None]:
    """The cyclic garbage collector passes over the objects that exist now (the caseload's patients,
    their stored snapshots, the caches) until the block ends. A refresh makes millions of
    short-lived objects, and each full collection they set off would walk every long-lived one
    again: about a fifth of a refresh of 2,000 patients went there. Nothing is kept longer for it:
    reference counting frees as always, and the objects are collected again after the block."""
    gc.freeze()
    try:
        yield
    finally:
        gc.unfreeze()


def check_mass_resolve(ctx: Context, resolutions: int) -> None:
    """Refuse a refresh that would auto-resolve more than the protocol's share of the unresolved
    alerts at once: a wrong date, a wrong protocol or a damaged store looks exactly like that.
    `resolutions` counts the alerts that would leave the lists, not those replaced by a new one."""
    p = ctx.protocol
    unresolved = ctx.store.alerts.count_unresolved()
    if resolutions >= p.mass_resolve_min and resolutions > p.mass_resolve_share * unresolved:
        raise Refused(
            f"refresh stopped: it would auto-resolve {resolutions} of the {unresolved} unresolved alerts at once "
            f"(more than {p.mass_resolve_share:.0%}, protocol mass_resolve_share), which a wrong date, a wrong "
            "protocol or a damaged store would also do: nothing was written; check the date and the protocol"
        )


def _write_patient(ctx: Context, w: PatientWork, last_try: bool) -> tuple[int, int] | None:
    """Inside the batch's write: the computed state, or None when she changed meanwhile (she is
    computed again outside the write). On the last try she is recomputed here instead, so a patient
    logged again and again cannot hold the refresh up; that costs one patient's compute, no more."""
    pid = w.patient.id
    if ctx.store.list_marks.of(pid).get(pid) != w.mark:
        if not last_try:
            return None
        patient = ctx.store.patients.get(pid)
        _, raised, resolved = _recompute(ctx, patient, compute(ctx, patient))
        return len(raised), resolved
    ctx.store.state.put(w.snapshot)
    if w.writes_kept:
        _keep(ctx, pid, w.keep, w.replace)
    return len(apply_plan(ctx, w.plan)), len(w.plan.resolutions)


def write_refresh(ctx: Context, found: RefreshPlan, progress: Progress | None = None) -> RefreshReport:
    """Write a computed refresh a few patients per short transaction; patients changed since their
    compute are computed again outside the write and retried."""
    raised = resolved = done = 0
    queue = [(w, 1) for w in found.work]  # (work, try)
    while queue:
        batch, queue = queue[:BATCH_PATIENTS], queue[BATCH_PATIENTS:]
        began = time.perf_counter()
        counts = ctx.store.transact(
            lambda: [_write_patient(ctx, w, tries >= WRITE_TRIES) for w, tries in batch],  # noqa: B023 - run at once
            ctx.today,
        )
        time.sleep((time.perf_counter() - began) * PAUSE_SHARE)
        for (w, tries), count in zip(batch, counts):
            if count is None:
                queue.append((_compute_again(ctx, w.patient.id), tries + 1))
                continue
            raised, resolved, done = raised + count[0], resolved + count[1], done + 1
        if progress is not None:
            progress("written", done, len(found.work))
    return RefreshReport(found.patients, raised, resolved)


def refresh_all(ctx: Context, progress: Progress | None = None) -> RefreshReport:
    """Every patient as of ctx.today: computed outside any write, then written in short
    transactions. Idempotent; safe to run twice at once and to interrupt."""
    return write_refresh(ctx, plan_refresh(ctx, progress), progress)


@dataclass(frozen=True)
class Recomputed:
    """`check --recompute`: the kept cycles thrown away and every patient recomputed from every
    entry; `differences` names each patient whose kept cycles had given another result."""

    patients: int
    kept_dropped: int
    differences: tuple[str, ...]
    report: RefreshReport


def recompute_everything(ctx: Context, progress: Progress | None = None) -> Recomputed:
    """Compare, patient by patient, what the kept cycles give with what every entry gives (the
    analysis, the snapshot, the alert plan), then forget the kept cycles and refresh from every
    entry, keeping the cycles afresh. Nothing differs unless the kept cycles were wrong."""
    ctx.require("store.check")
    ctx.require("alert.refresh")
    patients = {p.id: p for p in ctx.store.patients.all()}
    differences = []
    for patient_id, seen in _every_chart(ctx, set(patients)):
        patient = patients[patient_id]
        differing = _differing(ctx, patient, compute(ctx, patient), compute_whole(ctx, patient, seen))
        if differing:
            differences.append(f"{patient_id}: {', '.join(differing)}")
    dropped = ctx.store.transact(ctx.store.closed_cycles.drop, ctx.today)
    return Recomputed(len(patients), dropped, tuple(differences), refresh_all(ctx, progress))


def _every_chart(ctx: Context, unseen: set[str]) -> Iterator[tuple[str, list[Observation]]]:
    """The observations of each of these patients, streamed in one pass over the entries; [] for
    those without any. A patient registered after the list was read waits for the next run."""
    for patient_id, seen in ctx.store.entries.observations_by_patient():
        if patient_id in unseen:
            unseen.discard(patient_id)
            yield patient_id, seen
    for patient_id in sorted(unseen):
        yield patient_id, []


def _differing(ctx: Context, patient: Patient, kept: Computed, whole: Computed) -> list[str]:
    """What the kept path (`kept`) gives differently from every entry (`whole`)."""
    found = []
    if kept.analysis != whole.analysis:
        found.append("the analysis")
    if snapshot_of(kept.analysis) != snapshot_of(whole.analysis):
        found.append("the snapshot")
    if plan_alerts(ctx, patient, kept.analysis, kept.rule_obs) != plan_alerts(ctx, patient, whole.analysis, whole.rule_obs):
        found.append("the alerts")
    return found
