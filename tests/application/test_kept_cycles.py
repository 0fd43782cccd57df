"""Kept completed cycles on real store files: a store refreshed from its kept cycles and the same
store refreshed from every entry (its kept cycles thrown away before each write) hold identical
snapshots and alerts, through corrections, voids, late entries, a late bleed that splits a cycle,
entries on the boundary day, status changes and days passing; on the demo caseload and on a
simulated one. The reference is the analysis of every entry, as the store computed it before
cycles were kept."""

from __future__ import annotations

import json
import random
import sqlite3
from dataclasses import fields, replace
from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from caseload.core.analysis import CycleRecord
from caseload.core.closed_cycles import kept_key
from caseload.core.model import Actor, Kind, Patient, Plan
from caseload.core.parse import InputError
from caseload.application.context import Context
from caseload.application.demo import build_demo
from caseload.application.entries import amend_entry, log_entry, void_entry
from caseload.application.errors import Refused
from caseload.application.identity import os_account
from caseload.application.patients import update_patient
from caseload.application.protocol import load_protocol
from caseload.application.recompute import recompute_everything, refresh_all
from caseload.application.staff import add_staff, init_store
from caseload.store import Store
from caseload.store.bulk_load import NewEntry
from tools.bench.build import BenchSpec, build, parsed_entry
from tools.sim import simulate_patient
from tools.sim.cycles import irregular_profile, population_profile

START = date(2025, 3, 3)
TODAY = date(2025, 11, 3)


def derived(path: Path) -> tuple[list, list]:
    """Every snapshot and every alert as stored (ids included: both stores raise in the same order)."""
    with sqlite3.connect(path) as conn:
        states = conn.execute("SELECT patient_id, computed_on, state FROM patient_state ORDER BY patient_id").fetchall()
        alerts = conn.execute(
            "SELECT id, patient_id, kind, key, severity, raised_on, due, message, evidence, state, resolved_reason"
            " FROM alert ORDER BY id"
        ).fetchall()
    return states, alerts


def copy_store(source: Path, target: Path) -> None:
    """A consistent copy, whatever the source's write-ahead log still holds."""
    with sqlite3.connect(source) as src, sqlite3.connect(target) as dst:
        src.backup(dst)


def kept_rows(path: Path) -> int:
    with sqlite3.connect(path) as conn:
        return conn.execute("SELECT count(*) FROM closed_cycle").fetchone()[0]


def charted_store(path: Path, seeds: tuple[int, ...]) -> None:
    """A store with one simulated patient per seed, charting from START to the day before TODAY,
    loaded in bulk and refreshed once (which keeps her completed cycles)."""
    with Store(path, clock=lambda: datetime.combine(TODAY, time(8), UTC)) as store:
        admin = init_store(store, "admin1", "Ada Admin", os_account())
        ctx = Context(store, admin, TODAY)
        nurse = Actor(add_staff(ctx, "nurse1", "Test nurse", "nurse"), "tester")
        items, patients = [], []
        for number, seed in enumerate(seeds, start=1):
            rng = random.Random(seed)
            profile = (irregular_profile if seed % 3 == 0 else population_profile)(rng, Plan.NATURAL, True)
            profile = replace(profile, conception_rate=0.0, logs_lh=True, logs_mucus=True)
            patient = Patient(f"P{number:04d}", f"Patient {number}", date(1990, 1, 1), "nurse1", created=START)
            patients.append(patient)
            for sim in simulate_patient(rng, profile, START, TODAY - timedelta(days=1)).entries:
                at = datetime.combine(sim.day, time(8), UTC)
                items.append(NewEntry(0, nurse, patient.id, parsed_entry(sim), at))
        store.bulk.patients(admin, patients)
        first = store.bulk.next_entry_id()
        store.bulk.entries(replace(item, id=first + i) for i, item in enumerate(items))
        refresh_all(Context(store, admin, TODAY, load_protocol(store)))


class Twins:
    """The same store twice: `kept` refreshes from kept cycles, `whole` from every entry."""

    def __init__(self, folder: Path, seeds: tuple[int, ...]):
        self.kept_path, self.whole_path = folder / "kept.db", folder / "whole.db"
        charted_store(self.kept_path, seeds)
        copy_store(self.kept_path, self.whole_path)
        self.kept, self.whole = Store(self.kept_path), Store(self.whole_path)
        self.today = TODAY

    def close(self) -> None:
        self.kept.close()
        self.whole.close()

    def contexts(self, role: str = "nurse1") -> tuple[Context, Context]:
        made = []
        for store in (self.kept, self.whole):
            staff = store.staff.get(role)
            made.append(Context(store, Actor(staff, "tester"), self.today, load_protocol(store)))
        return made[0], made[1]

    def both(self, step) -> None:
        """Run `step(ctx)` on both stores; the whole store forgets its kept cycles first."""
        kept_ctx, whole_ctx = self.contexts()
        self.whole.transact(self.whole.closed_cycles.drop, self.today)
        assert _outcome(step, kept_ctx) == _outcome(step, whole_ctx)  # both done, or both refused alike
        assert derived(self.kept_path) == derived(self.whole_path)

    def refresh(self) -> None:
        kept_ctx, whole_ctx = self.contexts("admin1")
        self.whole.transact(self.whole.closed_cycles.drop, self.today)
        refresh_all(kept_ctx)
        refresh_all(whole_ctx)
        assert derived(self.kept_path) == derived(self.whole_path)

    def current(self, patient_id: str, kind: Kind | None = None):
        return [e for e in self.kept.entries.for_patient(patient_id) if e.current and (kind is None or e.kind == kind)]

    def kept_cycles(self, patient_id: str):
        return self.kept.closed_cycles.current(patient_id, kept_key(load_protocol(self.kept)))


def _outcome(step, ctx: Context) -> str:
    try:
        step(ctx)
    except (Refused, InputError) as refused:  # e.g. a second temperature on a day
        return str(refused)
    return "done"


@pytest.fixture
def twins(tmp_path):
    made = Twins(tmp_path, (11, 12))
    yield made
    made.close()


def test_a_log_and_a_refresh_read_only_the_open_cycles_entries(twins, monkeypatch):
    read_from = []
    whole_read = twins.kept.entries.observations_for
    monkeypatch.setattr(twins.kept.entries, "observations_for", lambda pid: pytest.fail(f"read all of {pid}'s entries"))
    real_from = twins.kept.entries.observations_from
    monkeypatch.setattr(twins.kept.entries, "observations_from", lambda pid, day: read_from.append(day) or real_from(pid, day))
    kept_ctx, _ = twins.contexts()
    log_entry(kept_ctx, "P0001", "lh", "negative")
    twins.today += timedelta(days=1)
    refresh_all(twins.contexts("admin1")[0])
    cuts = [twins.kept_cycles(pid)[-1].next_start for pid in ("P0001", "P0002")]
    assert read_from == [cuts[0], cuts[0], cuts[1]]
    assert len(whole_read("P0001")) > 4 * len(real_from("P0001", cuts[0]))  # the open cycle is a small part


def test_a_late_temperature_inside_a_closed_cycle_recomputes_it(twins):
    cycle = twins.kept_cycles("P0001")[-2]
    day = cycle.record.start + timedelta(days=5)
    twins.both(lambda ctx: log_entry(ctx, "P0001", "note", "called back", on=day.isoformat()))
    # The entry lies in a kept cycle's span: the cycles were recomputed and kept afresh.
    assert twins.kept_cycles("P0001")[-2].record == cycle.record
    temp = next(e for e in twins.current("P0001", Kind.TEMP) if e.day >= day)
    twins.both(lambda ctx: amend_entry(ctx, temp.id, "38.6", "read back to the patient"))
    fevers = [o.value.number for c in twins.kept_cycles("P0001") for o in c.history if o.kind == Kind.TEMP]
    assert 38.6 in fevers  # 38.0 C or more is a fever (common practice): kept for the fever alert


def test_corrections_and_voids_inside_closed_cycles(twins):
    cycle = twins.kept_cycles("P0002")[-3].record
    inside = [e for e in twins.current("P0002") if cycle.start <= e.day <= cycle.end]
    temp = next(e for e in inside if e.kind == Kind.TEMP)
    twins.both(lambda ctx: amend_entry(ctx, temp.id, f"{temp.value.number + 0.4:.2f}", "misread thermometer"))
    day_one = next(e for e in inside if e.kind == Kind.BLEED and e.day == cycle.start)
    twins.both(lambda ctx: void_entry(ctx, day_one.id, "logged for the wrong patient"))


def test_a_late_bleed_splits_a_closed_cycle_and_entries_on_the_boundary_day(twins):
    before = twins.kept_cycles("P0001")
    cycle = before[-2].record
    split = cycle.start + timedelta(days=max(12, (cycle.length or 24) // 2))
    twins.both(lambda ctx: log_entry(ctx, "P0001", "bleed", "heavy", on=split.isoformat()))
    assert split in [c.record.start for c in twins.kept_cycles("P0001")] or split == twins.kept_cycles("P0001")[-1].next_start
    cut = twins.kept_cycles("P0001")[-1].next_start
    for day, kind, value in ((cut - timedelta(days=1), "bleed", "spotting"), (cut, "lh", "positive"), (cut, "hcg", "positive")):
        twins.both(lambda ctx, d=day, k=kind, v=value: log_entry(ctx, "P0001", k, v, on=d.isoformat()))


def test_status_changes_and_days_passing(twins):
    twins.both(lambda ctx: update_patient(ctx, "P0002", status="pregnant"))
    for _ in range(3):
        twins.today += timedelta(days=9)
        twins.refresh()
    twins.both(lambda ctx: update_patient(ctx, "P0002", status="active"))
    twins.both(lambda ctx: log_entry(ctx, "P0001", "bleed", "moderate"))
    twins.today += timedelta(days=1)
    twins.refresh()


# One step of a clinic's day: (name, which entry or day, a value choice).
STEP = st.tuples(
    st.sampled_from(["log", "late", "late-bleed", "amend", "void", "boundary", "next-day"]),
    st.integers(0, 10_000),
    st.integers(0, 3),
)


def _step(twins: Twins, step: tuple[str, int, int]) -> None:
    name, pick, choice = step
    patient_id = ("P0001", "P0002")[pick % 2]
    days = (twins.today - START).days
    if name == "next-day":
        twins.today += timedelta(days=1 + choice)
        twins.refresh()
    elif name == "log":
        kind, value = (("temp", f"{36.3 + choice / 10:.2f}"), ("bleed", "light"), ("lh", "positive"), ("mucus", "stretchy"))[choice]
        twins.both(lambda ctx: log_entry(ctx, patient_id, kind, value, at="06:50" if kind == "temp" else None))
    elif name in ("late", "late-bleed"):
        day = START + timedelta(days=pick % days)
        kind, value = ("bleed", ("light", "moderate", "heavy", "spotting")[choice]) if name == "late-bleed" else ("note", "call")
        twins.both(lambda ctx: log_entry(ctx, patient_id, kind, value, on=day.isoformat()))
    elif name == "boundary":
        kept = twins.kept_cycles(patient_id)
        if kept:
            day = kept[-1].next_start - timedelta(days=choice % 2)
            twins.both(lambda ctx: log_entry(ctx, patient_id, "bleed", ("spotting", "light")[choice // 2], on=day.isoformat()))
    else:
        entries = [e for e in twins.current(patient_id) if e.kind in (Kind.TEMP, Kind.BLEED, Kind.LH)]
        entry = entries[pick % len(entries)]
        if name == "void":
            twins.both(lambda ctx: void_entry(ctx, entry.id, "entered in error"))
        elif entry.kind == Kind.TEMP:
            twins.both(lambda ctx: amend_entry(ctx, entry.id, f"{entry.value.number + 0.3:.2f}", "misread"))
        elif entry.kind == Kind.BLEED:
            twins.both(lambda ctx: amend_entry(ctx, entry.id, ("spotting", "heavy")[choice % 2], "misheard"))


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(seed=st.integers(1, 10_000), steps=st.lists(STEP, min_size=1, max_size=8))
def test_kept_and_whole_agree_over_random_days_of_corrections_voids_and_late_entries(tmp_path_factory, seed, steps):
    twins = Twins(tmp_path_factory.mktemp("twins"), (seed, seed + 1))
    try:
        for step in steps:
            _step(twins, step)
    finally:
        twins.close()


def test_the_demo_caseload_refreshed_from_kept_cycles_matches_every_entry(tmp_path):
    path = tmp_path / "demo.db"
    build_demo(path, TODAY, os_account())
    assert kept_rows(path) > 100  # the demo's 42 patients have months of completed cycles
    copy = tmp_path / "copy.db"
    for later in (1, 6, 20):
        copy.unlink(missing_ok=True)
        copy_store(path, copy)
        with Store(path) as kept, Store(copy) as whole:
            whole.transact(whole.closed_cycles.drop)
            for store in (kept, whole):
                admin = store.staff.by_os_account(os_account())
                refresh_all(Context(store, Actor(admin, "tester"), TODAY + timedelta(days=later), load_protocol(store)))
        assert derived(path) == derived(copy)
    with Store(path) as store:
        admin = store.staff.by_os_account(os_account())
        done = recompute_everything(Context(store, Actor(admin, "tester"), TODAY + timedelta(days=20), load_protocol(store)))
    assert (done.patients, done.differences) == (42, ())


def test_a_simulated_caseload_recomputed_from_every_entry_differs_in_nothing(tmp_path):
    spec = BenchSpec(12, 1)
    built = build(spec, tmp_path / "sim.db")
    with Store(built.path) as store:
        ctx = Context(store, Actor(store.staff.get("super-1"), "tester"), spec.today, load_protocol(store))
        assert store.closed_cycles.current("P00001", kept_key(ctx.protocol))  # the build's refresh kept them
        done = recompute_everything(ctx)
    assert (done.patients, done.differences) == (12, ())
    assert done.kept_dropped == kept_rows(built.path)  # thrown away, then kept again


BLEED_DAYS = [f.name for f in fields(CycleRecord)].index("bleed_days")  # its place in a kept record


def test_recompute_names_a_patient_whose_kept_cycle_was_wrong_and_puts_it_right(twins):
    with sqlite3.connect(twins.kept_path) as conn:
        start, result = conn.execute(
            "SELECT cycle_start, result FROM closed_cycle WHERE patient_id = 'P0002' ORDER BY cycle_start DESC"
        ).fetchone()
        wrong = json.loads(result)
        wrong[0][BLEED_DAYS] += 3  # her bleed said to last three days longer
        conn.execute("UPDATE closed_cycle SET result = ? WHERE patient_id = 'P0002' AND cycle_start = ?",
                     (json.dumps(wrong), start))  # fmt: skip
    ctx = twins.contexts("admin1")[0]
    # Trusted as kept, since its entries' counts are unchanged:
    assert twins.kept_cycles("P0002")[-1].record.bleed_days == json.loads(result)[0][BLEED_DAYS] + 3
    done = recompute_everything(ctx)
    (named,) = done.differences
    assert named.startswith("P0002: the analysis")
    assert twins.kept_cycles("P0002")[-1].record.bleed_days == json.loads(result)[0][BLEED_DAYS]
    assert recompute_everything(ctx).differences == ()
