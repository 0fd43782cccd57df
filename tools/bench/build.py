"""Bench stores: a simulated caseload of N patients with Y years of daily entries, loaded in bulk.

The mix is the simulator's caseload (plans, regular and irregular cycles, anovulatory cycles,
pregnancies, logging gaps), plus what a real store gathers: corrected temperatures, paused and
discharged patients, entries logged by phone clerks and nurses. Entries are written in the order a
clinic writes them, day by day with every patient's entries of a day interleaved, each with the
audit row and chain link a single write makes. A built store is cached under a folder and reused
while its parameters and the code that shapes it are unchanged.
"""

from __future__ import annotations

import hashlib
import heapq
import json
import multiprocessing
import os
import pickle
import random
import tempfile
import time as clock
from collections import defaultdict
from collections.abc import Iterator
from concurrent.futures import ProcessPoolExecutor
from dataclasses import asdict, dataclass, replace
from datetime import UTC, date, datetime, time, timedelta
from functools import lru_cache
from pathlib import Path

from caseload.core.model import Actor, Kind, Patient, PatientStatus, Role, Staff
from caseload.core.parse import ParsedEntry, parse_entry
from caseload.application.context import Context
from caseload.application.recompute import refresh_all
from caseload.application.protocol import load_protocol
from caseload.application.staff import init_store
from tools.sim import SimChart, SimEntry
from tools.sim.simulate import simulate_caseload_patient
from caseload.store import Store
from caseload.store.bulk_load import PreparedEntries, audit_json
from caseload.store.entry_table import entry_row

BENCH_SEED = 20260101
END = date(2026, 11, 29)  # a Sunday: "today" is the Monday after, so ISO week 48 is complete
PATIENTS_PER_NURSE = 60
PATIENTS_PER_CLERK = 250
AMEND_RATE = 0.005  # share of temperatures first keyed wrong, then corrected by a nurse
PAUSED_SHARE = 0.03
DISCHARGED_SHARE = 0.02
PARALLEL_FROM = 500  # patients; smaller caseloads are not worth a second process
SLICE = 100  # patients simulated by one worker task
NURSE_SHARE = 0.1  # routine entries a nurse logs herself; the phone line logs the rest
_NURSE_KINDS = frozenset({Kind.MED, Kind.SCAN, Kind.TRIGGER, Kind.INSEMINATION})
# Files whose change alters what a build writes: a cached store built by older code is rebuilt.
_SHAPING = ("tools/sim/chart.py", "tools/sim/cycles.py", "tools/sim/render.py", "tools/sim/simulate.py",
            "caseload/core/parse.py", "tools/bench/build.py", "caseload/store/bulk_load.py",
            "caseload/store/entry_table.py", "caseload/store/db.py")  # fmt: skip


@dataclass(frozen=True)
class BenchSpec:
    """A bench caseload: how many patients, how many years of entries, which seed."""

    patients: int
    years: int
    seed: int = BENCH_SEED

    @property
    def name(self) -> str:
        return f"{self.patients}x{self.years}"

    @property
    def start(self) -> date:
        return END - timedelta(days=365 * self.years - 1)

    @property
    def today(self) -> date:
        """The bench morning: the day after the last entries."""
        return END + timedelta(days=1)


def parse_sizes(text: str) -> list[BenchSpec]:
    """'200x1,2000x2' -> specs; PATIENTSxYEARS, each at least 1 (years at most 10)."""
    specs = []
    for part in filter(None, (p.strip() for p in text.split(","))):
        left, sep, right = part.lower().partition("x")
        if not (sep and left.isdigit() and right.isdigit() and int(left) >= 1 and 1 <= int(right) <= 10):
            raise ValueError(f"size '{part}' not understood: write PATIENTSxYEARS, for example 2000x2 (years 1-10)")
        specs.append(BenchSpec(int(left), int(right)))
    if not specs:
        raise ValueError("no sizes given: write for example 200x1,2000x2")
    return specs


@dataclass(frozen=True)
class BenchStore:
    """A built store file and what building it cost."""

    spec: BenchSpec
    path: Path
    patients: int
    entries: int
    load_seconds: float  # simulating, parsing and bulk-inserting
    refresh_seconds: float  # the first morning refresh of derived state and alerts
    reused: bool = False


@dataclass(frozen=True)
class BenchStaff:
    admin: Actor
    nurses: tuple[Actor, ...]
    clerks: tuple[Actor, ...]
    supervisor: Actor


def fingerprint(spec: BenchSpec) -> str:
    """Parameters and shaping code, hashed: equal fingerprints mean an identical store."""
    digest = hashlib.sha256(json.dumps(asdict(spec), sort_keys=True).encode())
    root = Path(__file__).resolve().parents[2]
    for name in _SHAPING:
        digest.update((root / name).read_bytes())
    return digest.hexdigest()[:16]


def bench_store(spec: BenchSpec, folder: Path) -> BenchStore:
    """The cached store for `spec` under `folder`, built first if missing or out of date."""
    key = fingerprint(spec)
    path, info = folder / f"{spec.name}-{key}.db", folder / f"{spec.name}-{key}.json"
    if path.exists() and info.exists():
        saved = json.loads(info.read_text())
        return BenchStore(spec, path, saved["patients"], saved["entries"], saved["load_seconds"],
                          saved["refresh_seconds"], reused=True)  # fmt: skip
    for old in folder.glob(f"{spec.name}-*"):
        old.unlink()  # stores built from other code or parameters
    partial = folder / f"{spec.name}-{key}.partial.db"
    built = build(spec, partial)
    partial.rename(path)
    info.write_text(json.dumps({**asdict(spec), "fingerprint": key, "patients": built.patients,
                                "entries": built.entries, "load_seconds": built.load_seconds,
                                "refresh_seconds": built.refresh_seconds}, indent=2))  # fmt: skip
    return replace(built, path=path)


def staff_for(spec: BenchSpec) -> list[Staff]:
    """Everyone but the admin: a supervisor, a nurse per 60 patients, a clerk per 250."""
    nurses = -(-spec.patients // PATIENTS_PER_NURSE)
    clerks = -(-spec.patients // PATIENTS_PER_CLERK)
    return (
        [Staff("super-1", "Bench Supervisor", Role.SUPERVISOR, True, "super-1")]
        + [Staff(f"nurse-{i:03d}", f"Bench Nurse {i}", Role.NURSE, True, f"nurse-{i:03d}") for i in range(1, nurses + 1)]
        + [Staff(f"clerk-{i:02d}", f"Bench Clerk {i}", Role.PHONE, True, f"clerk-{i:02d}") for i in range(1, clerks + 1)]
    )


def bench_staff(store: Store) -> BenchStaff:
    """The actors of a bench store, each acting from their own OS account."""
    people = {s.id: Actor(s, s.os_account or s.id) for s in store.staff.all()}
    by_role = {role: tuple(a for a in people.values() if a.role is role) for role in Role}
    return BenchStaff(by_role[Role.ADMIN][0], by_role[Role.NURSE], by_role[Role.PHONE], by_role[Role.SUPERVISOR][0])


def build(spec: BenchSpec, path: Path) -> BenchStore:
    """A new store at `path` (which must not exist yet) holding the bench caseload, refreshed once.

    Charts are simulated in worker processes, a slice of patients each, and each slice's entries
    are spooled by the month they were logged in. The store is then written a month at a time in
    logging order: every patient's entries of one day before any of the next day's."""
    if path.exists():
        raise FileExistsError(f"{path} exists: a bench store is built into a new file")
    began = clock.perf_counter()
    created = datetime.combine(spec.start - timedelta(days=45), time(9), UTC)
    with Store(path, clock=lambda: created) as store, tempfile.TemporaryDirectory(dir=path.parent) as spool:
        admin = init_store(store, "admin", "Bench Admin", "admin")
        store.bulk.staff(admin, staff_for(spec))
        people = bench_staff(store)
        slices = _simulate(spec, people, Path(spool))
        patients = store.bulk.patients(admin, [p for s in slices for p in s.patients])
        with store.bulk.loading():
            months = _months(slices, store.bulk.next_entry_id())
            entries = sum(store.bulk.insert_prepared(month) for month in months)
        loaded = clock.perf_counter()
        store.db.clock = lambda: datetime.combine(spec.today, time(7), UTC)
        refresh_all(Context(store, people.admin, spec.today, load_protocol(store)))
        refreshed = clock.perf_counter()
    return BenchStore(spec, path, patients, entries, round(loaded - began, 2), round(refreshed - loaded, 2))


@dataclass(frozen=True)
class Slice:
    """What one worker simulated: its patients, and its entries spooled in one file per month of logging."""

    patients: list[Patient]
    months: dict[str, Path]
    columns: tuple[str, ...]  # of the spooled rows' values, as `entry_row` names them


# One entry as a worker spools it: when it was logged, the patient's number and the entry's number
# for her (the sort key), the number of the entry it corrects or -1, then the row's values without
# its id, and the audit row's `after`. A correction's `supersedes` is filled in when ids are given.
Spooled = tuple[str, int, int, int, tuple, str]


def _simulate(spec: BenchSpec, people: BenchStaff, spool: Path) -> list[Slice]:
    """Every patient simulated, SLICE patients per task, on every core for a large caseload."""
    tasks = [(spec, people, range(i, min(i + SLICE, spec.patients)), spool) for i in range(0, spec.patients, SLICE)]
    if spec.patients < PARALLEL_FROM:
        return [_simulate_slice(*task) for task in tasks]
    spawn = multiprocessing.get_context("spawn")  # workers start clean, holding no store connection
    with ProcessPoolExecutor(max_workers=os.cpu_count() or 1, mp_context=spawn) as pool:
        return list(pool.map(_simulate_slice, *zip(*tasks)))


def _simulate_slice(spec: BenchSpec, people: BenchStaff, numbers: range, spool: Path) -> Slice:
    """Patients `numbers` of the caseload: their records, and their entries sorted into one file per month."""
    patients, by_month, columns = [], defaultdict(list), ()
    nurses = {a.id: a for a in people.nurses}
    for i, patient, chart in _caseload(spec, people, numbers):
        rng = random.Random(f"entries-{spec.seed}-{i}")
        nurse, clerk = nurses[patient.nurse_id], people.clerks[i % len(people.clerks)]
        for seq, sim in enumerate(chart.entries):
            for row, columns in _logged(rng, i, 2 * seq, patient.id, sim, nurse, clerk):
                by_month[row[0][:7]].append(row)
        patients.append(patient)
    months = {}
    for month, rows in by_month.items():
        months[month] = spool / f"{month}-{numbers.start:06d}.pickle"
        months[month].write_bytes(pickle.dumps(sorted(rows), protocol=pickle.HIGHEST_PROTOCOL))
    return Slice(patients, months, columns)


def _months(slices: list[Slice], first_id: int) -> Iterator[PreparedEntries]:
    """The spooled entries a month at a time in logging order, with their ids and audit rows."""
    next_id, corrected = first_id, {}
    columns = next((s.columns for s in slices if s.columns), ())
    if not columns:
        return
    supersedes, by, os_account = (columns.index(c) for c in ("supersedes", "by_staff", "os_account"))
    for month in sorted({m for s in slices for m in s.months}):
        spooled = heapq.merge(*(pickle.loads(s.months[month].read_bytes()) for s in slices if month in s.months))
        rows, audits = [], []
        for at, patient_no, seq, corrects, values, after in spooled:
            action = "entry.log"
            if corrects >= 0:
                target = corrected.pop((patient_no, corrects))
                values = (*values[:supersedes], target, *values[supersedes + 1 :])
                after = audit_json({**json.loads(after), "supersedes": target})
                action = "entry.amend"
            elif seq % 2:  # a mistyped reading: the correction logged after it names its id
                corrected[patient_no, seq] = next_id
            rows.append((next_id, *values))
            audits.append((at, values[by], values[os_account], action, "entry", str(next_id), None, after, at[:10]))
            next_id += 1
        yield PreparedEntries(("id", *columns), rows, audits)


def _caseload(spec: BenchSpec, people: BenchStaff, numbers: range) -> Iterator[tuple[int, Patient, SimChart]]:
    """Patients `numbers` of the simulated caseload, a few of them since paused or discharged."""
    nurse_ids = [a.id for a in people.nurses]
    for i in numbers:
        patient, chart = simulate_caseload_patient(spec.seed, i, spec.start, END, nurse_ids)
        roll = random.Random(f"status-{spec.seed}-{i}").random()
        if patient.status is PatientStatus.ACTIVE and roll < DISCHARGED_SHARE:
            patient = replace(patient, status=PatientStatus.DISCHARGED)
        elif patient.status is PatientStatus.ACTIVE and roll < DISCHARGED_SHARE + PAUSED_SHARE:
            patient = replace(patient, status=PatientStatus.PAUSED)
        yield i, patient, chart


def _logged(
    rng: random.Random, patient_no: int, seq: int, patient_id: str, sim: SimEntry, nurse: Actor, clerk: Actor
) -> list[tuple[Spooled, tuple[str, ...]]]:
    """The entry as logged (number `seq`), or a mistyped temperature (`seq` + 1) and the nurse's correction."""
    parsed = parsed_entry(sim)
    serum = sim.kind is Kind.HCG and sim.raw[0].isdigit()
    by = nurse if sim.kind in _NURSE_KINDS or serum or rng.random() < NURSE_SHARE else clerk
    at = _logged_at(rng, sim)
    if sim.kind is not Kind.TEMP or sim.raw.endswith("F") or rng.random() >= AMEND_RATE:
        return [_spooled(patient_no, seq, -1, by, patient_id, parsed, at)]
    slip = f"{parsed.value.number + rng.choice((-0.3, 0.3, 1.0)):.2f}"
    wrong = parsed_entry(replace(sim, raw=slip))
    later = at + timedelta(hours=1 + int(rng.random() * 6))
    return [_spooled(patient_no, seq + 1, -1, by, patient_id, wrong, at),
            _spooled(patient_no, seq, seq + 1, nurse, patient_id, parsed, later,
                     "keying slip, confirmed with the patient")]  # fmt: skip


def _spooled(
    patient_no: int, seq: int, corrects: int, by: Actor, patient_id: str, parsed: ParsedEntry, at: datetime,
    reason: str | None = None,
) -> tuple[Spooled, tuple[str, ...]]:  # fmt: skip
    """The spooled row and its columns."""
    text = at.isoformat(timespec="seconds")  # as the store's clock writes it
    row = entry_row(by, patient_id, parsed, text, None, reason)
    return (text, patient_no, seq, corrects, tuple(row.values()), audit_json(row)), tuple(row)


def parsed_entry(sim: SimEntry) -> ParsedEntry:
    """The entry as `parse_entry` reads it; each distinct text is parsed once, only the day differs."""
    once = _parse_once(sim.kind, sim.raw, sim.time, sim.flags, sim.note)
    return ParsedEntry(once.kind, sim.day, once.value, once.raw, once.time, once.flags, once.note)


@lru_cache(maxsize=65536)
def _parse_once(kind: Kind, raw: str, at: str | None, flags: tuple[str, ...], note: str) -> ParsedEntry:
    return parse_entry(kind, raw, END, on=END.isoformat(), at=at, flags=flags, note=note)


def _logged_at(rng: random.Random, sim: SimEntry) -> datetime:
    """Readings are phoned in soon after they are taken; other entries during the working day."""
    if sim.time:
        hour, minute = map(int, sim.time.split(":"))
        taken = datetime.combine(sim.day, time(hour, minute), UTC)
        return taken + timedelta(minutes=5 + int(rng.random() * 146))
    return datetime.combine(sim.day, time(8 + int(rng.random() * 10), int(rng.random() * 60)), UTC)
