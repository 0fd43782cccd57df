"""`python -m tools.bench.log_during_refresh`: a clerk's log latency while the morning refresh runs
in another process, against the same kind of log alone.

For each size the cached bench store is copied (the refresh writes), then:
  1. alone: LOGS entries, one after another, each for a different patient;
  2. during: the next morning's whole-caseload refresh started as its own process, and an entry
     logged every INTERVAL_S while it runs, each for a patient not logged yet.
Each log is timed from the call to its return, and apart the time it waited for the write lock
(what the refresh can cost it; the rest is its own work and the machine's load).
Figures: median and worst, overall and for the logs started while the refresh was writing.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from contextlib import contextmanager
from datetime import date, timedelta
from pathlib import Path

from caseload.core.model import PatientStatus
from caseload.application.entries import log_entry
from caseload.application import recompute
from caseload.store import Store
from tools.bench.build import bench_store, parse_sizes
from tools.bench.measure import _context
from tools.bench.process import CLERK, SUPERVISOR
from tools.bench.perf import CACHE

LOGS = 40
INTERVAL_S = 0.05
REFRESH_NICE = 10  # as `nice -n 10` in the README's cron line


def refresh_process(path: Path, today: date) -> None:
    """The refresh as its own process, at the lower CPU priority the README's cron line gives it;
    prints one line when it starts writing and one when done."""
    os.nice(REFRESH_NICE)
    def progress(stage: str, done: int, total: int) -> None:
        if stage == "written" and done <= recompute.BATCH_PATIENTS:  # the first batch: writing has begun
            print(json.dumps({"writing_from": time.time()}), flush=True)

    with Store(path) as store:
        began = time.time()
        report = recompute.refresh_all(_context(store, SUPERVISOR, today), progress)
        print(json.dumps({"began": began, "ended": time.time(), "patients": report.patients}), flush=True)


def _timed_log(ctx, patient_id: str) -> tuple[float, float]:
    """(whole log, of which waiting for the write lock), in ms."""
    waits: list[float] = []
    write = ctx.store.db.write

    @contextmanager
    def timed_write():
        asked = time.perf_counter()
        with write() as conn:
            waits.append(time.perf_counter() - asked)
            yield conn

    ctx.store.db.write = timed_write
    began = time.perf_counter()
    try:
        log_entry(ctx, patient_id, "temp", "36.58", on="today", at="07:05")
    finally:
        del ctx.store.db.write
    return (time.perf_counter() - began) * 1000, sum(waits) * 1000


def _figures(times: list[tuple[float, float]]) -> dict:
    if not times:
        return {"logs": 0}
    whole, waits = [t[0] for t in times], [t[1] for t in times]
    return {"logs": len(times), "median_ms": round(statistics.median(whole), 1), "worst_ms": round(max(whole), 1),
            "lock_wait_median_ms": round(statistics.median(waits), 1), "lock_wait_worst_ms": round(max(waits), 1)}


def measure(path: Path, today: date) -> dict:
    """Both phases on a copy of the store at `path`, as of `today` (the morning after its entries)."""
    with Store(path) as store:
        ids = [p.id for p in store.patients.all() if p.status is not PatientStatus.DISCHARGED]
        ctx = _context(store, CLERK, today)
        alone = [_timed_log(ctx, pid) for pid in ids[:LOGS]]
        refresh = subprocess.Popen(
            [sys.executable, "-m", "tools.bench.log_during_refresh", "--refresh-only", str(path), today.isoformat()],
            stdout=subprocess.PIPE, text=True,
        )  # fmt: skip
        during: list[tuple[float, tuple[float, float]]] = []  # (started at, (ms, lock wait ms))
        queue = iter(ids[LOGS:])
        while refresh.poll() is None:
            started = time.time()
            during.append((started, _timed_log(ctx, next(queue))))
            time.sleep(INTERVAL_S)
        lines = [json.loads(line) for line in refresh.stdout.read().splitlines()]
    if refresh.returncode != 0:
        raise SystemExit(f"the refresh process failed with exit code {refresh.returncode}")
    done = next(d for d in lines if "ended" in d)
    writing_from = next((d["writing_from"] for d in lines if "writing_from" in d), done["ended"])
    inside = [ms for at, ms in during if done["began"] <= at <= done["ended"]]
    writing = [ms for at, ms in during if writing_from <= at <= done["ended"]]
    return {
        "refresh_s": round(done["ended"] - done["began"], 1),
        "writing_s": round(done["ended"] - writing_from, 1),
        "alone": _figures(alone),
        "during_refresh": _figures(inside),
        "during_writing": _figures(writing),
    }


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m tools.bench.log_during_refresh", description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="200x1,2000x2", help="PATIENTSxYEARS,... (default 200x1,2000x2)")
    parser.add_argument("--folder", type=Path, default=CACHE / "stores", help=f"cache of built stores (default {CACHE / 'stores'})")
    parser.add_argument("--out", type=Path, help="results JSON (default FOLDER/log_during_refresh.json)")
    parser.add_argument("--refresh-only", nargs=2, metavar=("STORE", "DAY"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.refresh_only:
        refresh_process(Path(args.refresh_only[0]), date.fromisoformat(args.refresh_only[1]))
        return
    results = {}
    for spec in parse_sizes(args.sizes):
        built = bench_store(spec, args.folder)
        with tempfile.TemporaryDirectory(dir=args.folder) as scratch:
            copy = Path(scratch) / "store.db"
            shutil.copyfile(built.path, copy)
            results[spec.name] = measure(copy, spec.today + timedelta(days=1))
        print(spec.name, json.dumps(results[spec.name]), flush=True)
    out = args.out or args.folder / "log_during_refresh.json"
    out.write_text(json.dumps(results, indent=2))


if __name__ == "__main__":
    main()
