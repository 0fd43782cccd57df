"""Stress: N writer processes log entries through the services at once for T seconds.

Each writer has its own Store connection and its own staff member, and logs only valid entries
(temperatures on distinct days of its own patient, other kinds on patients every writer shares).
It records every write that returned success (entry id and a unique note token) in its own file.
Afterwards the store is checked: every acknowledged write is there exactly once, each entry has
exactly one `entry.log` audit row with its id, and `PRAGMA integrity_check` is ok.

    python -m tests.stress.stress --writers 8 --seconds 30
    python tests/stress/stress.py --writers 4 --seconds 3 --json

Exit code 0 when nothing was lost, duplicated or surfaced as an error; 1 otherwise.
"""

from __future__ import annotations

import argparse
import json
import multiprocessing
import random
import sqlite3
import sys
import tempfile
import time
import traceback
from collections import Counter
from dataclasses import asdict, dataclass
from datetime import date
from pathlib import Path

from caseload.core.model import Actor, Role
from caseload.application.context import Context
from caseload.application.entries import log_entry
from caseload.application.identity import os_account
from caseload.application.patients import add_patient
from caseload.application.staff import add_staff, init_store
from caseload.store import Store

TODAY = date(2026, 12, 1)
SHARED_PATIENTS = ("S01", "S02", "S03")
# Kinds that any number of writers may log for the same patient on the same day.
SHARED_KINDS = (("symptom", "mild cramps"), ("note", "called in"), ("lh", "negative"), ("mucus", "creamy"),
                ("med", "letrozole 2.5 mg"), ("intercourse", "yes"))


def writer_id(index: int) -> str:
    return f"w{index:02d}"


def own_patient(index: int) -> str:
    return f"P{index:03d}"


def build_store(path: Path, writers: int) -> None:
    """A store with one phone-line clerk and one patient per writer, plus patients they share."""
    with Store(path) as store:
        admin = init_store(store, "admin", "Stress Admin", os_account())
        ctx = Context(store, admin, TODAY)
        for i in range(writers):
            add_staff(ctx, writer_id(i), f"Writer {i}", Role.PHONE.value)
            add_patient(ctx, own_patient(i), f"Own {i}", "1990-01-01")
        for pid in SHARED_PATIENTS:
            add_patient(ctx, pid, f"Shared {pid}", "1988-06-15")


@dataclass(frozen=True)
class WriterResult:
    writes: int
    errors: dict[str, int]
    first_error: str | None


def writer(path: str, index: int, seconds: float, ack_path: str, start, result_path: str) -> None:
    """Log entries until the time is up; one ack line per write that returned success."""
    rng = random.Random(index)
    store = Store(path)
    actor = Actor(store.staff.get(writer_id(index)), f"os-{writer_id(index)}")
    ctx = Context(store, actor, TODAY)
    errors: Counter[str] = Counter()
    first_error = None
    writes = days_back = 0
    start.wait()
    deadline = time.monotonic() + seconds
    with open(ack_path, "w", encoding="utf-8") as acks:
        while time.monotonic() < deadline:
            token = f"{writer_id(index)}-{writes:06d}-{rng.getrandbits(32):08x}"
            try:
                if rng.random() < 0.5:
                    done = log_entry(ctx, own_patient(index), "temp", f"{36.2 + rng.random() * 0.8:.2f}",
                                     on=f"-{days_back}", note=token)
                    days_back += 1
                else:
                    kind, value = rng.choice(SHARED_KINDS)
                    done = log_entry(ctx, rng.choice(SHARED_PATIENTS), kind, value,
                                     on=f"-{rng.randrange(60)}", note=token)
            except Exception as err:  # every write here is valid: any refusal is a finding
                errors[type(err).__name__] += 1
                first_error = first_error or "".join(traceback.format_exception_only(err)).strip()
                continue
            acks.write(f"{done.entry.id} {token}\n")
            acks.flush()
            writes += 1
    store.close()
    Path(result_path).write_text(json.dumps(asdict(WriterResult(writes, dict(errors), first_error))))


@dataclass(frozen=True)
class Report:
    writers: int
    seconds: float
    acknowledged: int
    lost: int
    duplicated: int
    wrong_id: int
    errors: int
    error_kinds: dict[str, int]
    entries_in_store: int
    audit_mismatch: int
    integrity: str
    first_error: str | None

    @property
    def ok(self) -> bool:
        return not (self.lost or self.duplicated or self.wrong_id or self.errors or self.audit_mismatch) \
            and self.integrity == "ok"

    def line(self) -> str:
        rate = self.acknowledged / self.seconds if self.seconds else 0
        return (f"{self.writers} writers x {self.seconds:g} s x {self.acknowledged} writes ({rate:.0f}/s): "
                f"lost {self.lost}, duplicated {self.duplicated}, wrong id {self.wrong_id}, "
                f"errors surfaced {self.errors}, audit mismatches {self.audit_mismatch}, integrity {self.integrity}")


def read_acks(paths: list[Path]) -> list[tuple[int, str]]:
    """Complete ack lines only: a line cut short was never acknowledged."""
    acks = []
    for p in paths:
        for line in p.read_text(encoding="utf-8").splitlines(keepends=True):
            if line.endswith("\n"):
                entry_id, token = line.split()
                acks.append((int(entry_id), token))
    return acks


def audit_mismatches(conn: sqlite3.Connection) -> int:
    """Entries without exactly one entry.log audit row of the same id, plus audit rows without an entry."""
    entries = {r[0] for r in conn.execute("SELECT id FROM entry")}
    logged = Counter(int(r[0]) for r in conn.execute("SELECT row_id FROM audit WHERE action = 'entry.log'"))
    missing = sum(1 for e in entries if logged.get(e, 0) != 1)
    orphans = sum(1 for a in logged if a not in entries)
    return missing + orphans


def verify(path: Path, ack_paths: list[Path]) -> tuple[int, int, int, int, int, str, int]:
    """(acknowledged, lost, duplicated, wrong id, audit mismatches, integrity, entries) for a store."""
    acks = read_acks(ack_paths)
    conn = sqlite3.connect(path)
    try:
        by_token: dict[str, list[int]] = {}
        for entry_id, note in conn.execute("SELECT id, note FROM entry"):
            by_token.setdefault(note, []).append(entry_id)
        lost = sum(1 for _, t in acks if t not in by_token)
        duplicated = sum(1 for _, t in acks if len(by_token.get(t, ())) > 1)
        wrong = sum(1 for i, t in acks if t in by_token and by_token[t] != [i])
        integrity = ", ".join(r[0] for r in conn.execute("PRAGMA integrity_check"))
        entries = conn.execute("SELECT count(*) FROM entry").fetchone()[0]
        return len(acks), lost, duplicated, wrong, audit_mismatches(conn), integrity, entries
    finally:
        conn.close()


def run(writers: int, seconds: float, workdir: Path) -> Report:
    path = workdir / "stress.db"
    build_store(path, writers)
    spawn = multiprocessing.get_context("spawn")
    start = spawn.Event()
    acks = [workdir / f"acks-{writer_id(i)}.txt" for i in range(writers)]
    results = [workdir / f"result-{writer_id(i)}.json" for i in range(writers)]
    procs = [spawn.Process(target=writer, args=(str(path), i, seconds, str(acks[i]), start, str(results[i])))
             for i in range(writers)]
    for p in procs:
        p.start()
    time.sleep(0.5)  # let every writer open its connection before the clock starts
    start.set()
    for p in procs:
        p.join(seconds + 120)
    errors: Counter[str] = Counter()
    first_error = None
    for p, r in zip(procs, results):
        if p.exitcode != 0 or not r.exists():
            errors[f"writer exit {p.exitcode}"] += 1
            continue
        res = json.loads(r.read_text())
        errors.update(res["errors"])
        first_error = first_error or res["first_error"]
    acked, lost, dup, wrong, mismatch, integrity, entries = verify(path, [a for a in acks if a.exists()])
    return Report(writers, seconds, acked, lost, dup, wrong, sum(errors.values()), dict(errors), entries,
                  mismatch, integrity, first_error)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Concurrent writers through the services; check nothing is lost.")
    parser.add_argument("--writers", type=int, default=8)
    parser.add_argument("--seconds", type=float, default=30.0)
    parser.add_argument("--dir", type=Path, help="Keep the store and ack files here (default: a temporary folder).")
    parser.add_argument("--json", action="store_true", help="Print the report as JSON.")
    args = parser.parse_args(argv)
    if args.writers < 1 or args.seconds <= 0:
        parser.error("--writers must be at least 1 and --seconds above 0")
    with tempfile.TemporaryDirectory() as tmp:
        workdir = args.dir or Path(tmp)
        workdir.mkdir(parents=True, exist_ok=True)
        report = run(args.writers, args.seconds, workdir)
    print(json.dumps({**asdict(report), "ok": report.ok}) if args.json else report.line())
    if report.first_error and not args.json:
        print(f"first error: {report.first_error}", file=sys.stderr)
    return 0 if report.ok else 1


if __name__ == "__main__":
    sys.exit(main())
