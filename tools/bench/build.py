"""Bench stores: a simulated caseload of N patients with Y years of daily entries, loaded in bulk.

The mix is the simulator's caseload (plans, regular and irregular cycles, anovulatory cycles,
pregnancies, logging gaps), plus what a real store gathers: corrected temperatures, paused and
discharged patients, entries logged by phone clerks and nurses. A built store is cached under a
folder and reused while its parameters and the code that shapes it are unchanged.
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import random
import time as clock
from collections.abc import Iterator
from dataclasses import asdict, dataclass, replace
from datetime import UTC, date, datetime, time, timedelta
from functools import lru_cache
from pathlib import Path
from queue import Empty

from caseload.core.model import Actor, Kind, Patient, PatientStatus, Role, Staff
from caseload.core.parse import ParsedEntry, parse_entry
from caseload.application.context import Context
from caseload.application.recompute import refresh_all
from caseload.application.protocol import load_protocol
from caseload.application.staff import init_store
from tools.sim import SimChart, SimEntry, simulate_caseload
from caseload.store import Store
from caseload.store.bulk_load import ENTRY_BATCH, NewEntry, PreparedEntries, prepare_entries

BENCH_SEED = 20260101
END = date(2026, 11, 29)  # a Sunday: "today" is the Monday after, so ISO week 48 is complete
PATIENTS_PER_NURSE = 60
PATIENTS_PER_CLERK = 250
AMEND_RATE = 0.005  # share of temperatures first keyed wrong, then corrected by a nurse
PAUSED_SHARE = 0.03
DISCHARGED_SHARE = 0.02
PARALLEL_FROM = 500  # patients; smaller caseloads are not worth a second process
NURSE_SHARE = 0.1  # routine entries a nurse logs herself; the phone line logs the rest
_NURSE_KINDS = frozenset({Kind.MED, Kind.SCAN, Kind.TRIGGER, Kind.INSEMINATION})
# Files whose change alters what a build writes: a cached store built by older code is rebuilt.
_SHAPING = ("tools/sim/chart.py", "tools/sim/cycles.py", "tools/sim/render.py", "tools/sim/simulate.py",
            "caseload/core/parse.py", "tools/bench/build.py", "caseload/store/bulk_load.py",
            "caseload/store/entry_table.py")  # fmt: skip


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
    """A new store at `path` (which must not exist yet) holding the bench caseload, refreshed once."""
    if path.exists():
        raise FileExistsError(f"{path} exists: a bench store is built into a new file")
    began = clock.perf_counter()
    created = datetime.combine(spec.start - timedelta(days=45), time(9), UTC)
    with Store(path, clock=lambda: created) as store:
        admin = init_store(store, "admin", "Bench Admin", "admin")
        store.bulk.staff(admin, staff_for(spec))
        people = bench_staff(store)
        patients = entries = 0
        for chunk_patients, prepared in _chunks(spec, people, store.bulk.next_entry_id()):
            patients += store.bulk.patients(admin, chunk_patients)
            entries += store.bulk.insert_prepared(prepared)
        loaded = clock.perf_counter()
        store.db.clock = lambda: datetime.combine(spec.today, time(7), UTC)
        refresh_all(Context(store, people.admin, spec.today, load_protocol(store)))
        refreshed = clock.perf_counter()
    return BenchStore(spec, path, patients, entries, round(loaded - began, 2), round(refreshed - loaded, 2))


Chunk = tuple[list[Patient], PreparedEntries]


def _chunks(spec: BenchSpec, people: BenchStaff, first_id: int) -> Iterator[Chunk]:
    """The caseload in chunks; a large one is simulated in a second process while this one inserts."""
    if spec.patients < PARALLEL_FROM:
        yield from _prepared(spec, people, first_id)
        return
    queue = multiprocessing.get_context("spawn").Queue(maxsize=4)
    producer = multiprocessing.get_context("spawn").Process(
        target=_produce, args=(spec, people, first_id, queue), daemon=True
    )
    producer.start()
    try:
        while (item := _next(queue, producer)) is not None:
            yield item
    finally:
        producer.join(timeout=5)
        if producer.is_alive():
            producer.terminate()


def _next(queue, producer) -> Chunk | None:
    while True:
        try:
            item = queue.get(timeout=1)
        except Empty:
            if not producer.is_alive():
                raise RuntimeError("the process simulating the bench caseload stopped unexpectedly") from None
            continue
        if isinstance(item, str):
            raise RuntimeError(f"simulating the bench caseload failed: {item}")
        return item


def _produce(spec: BenchSpec, people: BenchStaff, first_id: int, queue) -> None:
    try:
        for chunk in _prepared(spec, people, first_id):
            queue.put(chunk)
    except Exception as err:  # reported to the inserting process, which raises it
        queue.put(f"{type(err).__name__}: {err}")
        return
    queue.put(None)


def _prepared(spec: BenchSpec, people: BenchStaff, first_id: int) -> Iterator[Chunk]:
    """Patients with their entries' rows, about ENTRY_BATCH entries at a time."""
    next_id, patients, items = first_id, [], []
    nurses = {a.id: a for a in people.nurses}
    for i, (patient, chart) in enumerate(_caseload(spec, people)):
        rng = random.Random(f"entries-{spec.seed}-{i}")
        nurse, clerk = nurses[patient.nurse_id], people.clerks[i % len(people.clerks)]
        for sim in chart.entries:
            logged = _logged(spec, rng, patient.id, sim, nurse, clerk, next_id)
            items += logged
            next_id += len(logged)
        patients.append(patient)
        if len(items) >= ENTRY_BATCH:
            yield patients, prepare_entries(items)
            patients, items = [], []
    if patients:
        yield patients, prepare_entries(items)


def _caseload(spec: BenchSpec, people: BenchStaff) -> Iterator[tuple[Patient, SimChart]]:
    nurse_ids = [a.id for a in people.nurses]
    for i, (patient, chart) in enumerate(simulate_caseload(spec.seed, spec.patients, spec.start, END, nurse_ids)):
        roll = random.Random(f"status-{spec.seed}-{i}").random()
        if patient.status is PatientStatus.ACTIVE and roll < DISCHARGED_SHARE:
            patient = replace(patient, status=PatientStatus.DISCHARGED)
        elif patient.status is PatientStatus.ACTIVE and roll < DISCHARGED_SHARE + PAUSED_SHARE:
            patient = replace(patient, status=PatientStatus.PAUSED)
        yield patient, chart


def _logged(
    spec: BenchSpec, rng: random.Random, patient_id: str, sim: SimEntry, nurse: Actor, clerk: Actor, next_id: int
) -> list[NewEntry]:
    """The entry as logged, or a mistyped temperature followed by the nurse's correction."""
    parsed = parsed_entry(sim)
    serum = sim.kind is Kind.HCG and sim.raw[0].isdigit()
    by = nurse if sim.kind in _NURSE_KINDS or serum or rng.random() < NURSE_SHARE else clerk
    at = _logged_at(rng, sim)
    if sim.kind is not Kind.TEMP or sim.raw.endswith("F") or rng.random() >= AMEND_RATE:
        return [NewEntry(next_id, by, patient_id, parsed, at)]
    slip = f"{parsed.value.number + rng.choice((-0.3, 0.3, 1.0)):.2f}"
    wrong = parsed_entry(replace(sim, raw=slip))
    return [
        NewEntry(next_id, by, patient_id, wrong, at),
        NewEntry(next_id + 1, nurse, patient_id, parsed, at + timedelta(hours=rng.randint(1, 6)), next_id,
                 "keying slip, confirmed with the patient"),  # fmt: skip
    ]


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
        return taken + timedelta(minutes=rng.randint(5, 150))
    return datetime.combine(sim.day, time(rng.randint(8, 17), rng.randint(0, 59)), UTC)
