"""One run of one measurement on a bench store, in a fresh interpreter.

Run as `python -m tools.bench.measure NAME STORE --today DAY --run K`; prints one JSON object.
A fresh process per run keeps every cache cold, as after a restart, and makes the peak memory
(`ru_maxrss`) that run's own. Timers start after the imports, at the store's opening.
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from collections.abc import Callable
from datetime import date, timedelta
from pathlib import Path

from caseload.exports.summary_files import write
from caseload.core.model import Actor, Kind, PatientStatus
from caseload.core.parse import parse_entry
from caseload.application.caseload_view import list_caseload
from caseload.application.context import Context
from caseload.application.recompute import refresh_all
from caseload.application.entries import log_entry
from caseload.application.identity import os_account
from caseload.application.staff import map_account
from caseload.application.protocol import load_protocol
from caseload.application.weekly_summary import export_summary
from caseload.store import Store
from tools.bench.process import ADMIN, CLERK, FIRST_NURSE, SUPERVISOR, children_peak_mb, peak_mb

LOG_PER_RUN = 50


def _actor(store: Store, staff_id: str) -> Actor:
    staff = store.staff.get(staff_id)
    if staff is None:
        raise SystemExit(f"{store.path} has no staff member {staff_id}: it is not a bench store")
    return Actor(staff, staff.os_account or staff.id)


def _context(store: Store, staff_id: str, today: date) -> Context:
    return Context(store, _actor(store, staff_id), today, load_protocol(store))


def measure_list(path: Path, today: date, run: int) -> dict:
    """Store open to the sorted morning list with its alerts: the whole caseload, then one nurse's."""
    began = time.perf_counter()
    with Store(path) as store:
        lines = list_caseload(_context(store, SUPERVISOR, today))
        whole = time.perf_counter() - began
        mine = time.perf_counter()
        nurse_lines = [line for line in list_caseload(_context(store, SUPERVISOR, today))
                       if line.patient.nurse_id == FIRST_NURSE]
        nurse = time.perf_counter() - mine
    return {"seconds": whole, "lines": len(lines), "nurse_seconds": nurse, "nurse_lines": len(nurse_lines)}


def measure_log(path: Path, today: date, run: int) -> dict:
    """LOG_PER_RUN entries through the service, each for a different patient; run K takes the next ones.
    A patient's first bench entry today is her temperature, any later one an LH test. Between them,
    the floor: the same entry's row and audit row inserted and committed, nothing recomputed."""
    times, floor = [], []
    with Store(path) as store:
        ids = [p.id for p in store.patients.all() if p.status is not PatientStatus.DISCHARGED]
        ctx = _context(store, CLERK, today)
        for k in range(run * LOG_PER_RUN, (run + 1) * LOG_PER_RUN):
            kind, value = ("temp", "36.58") if k < len(ids) else ("lh", "negative")
            patient_id = ids[k % len(ids)]
            began = time.perf_counter()
            log_entry(ctx, patient_id, kind, value, on="today", at="07:05")
            times.append(time.perf_counter() - began)
            parsed = parse_entry(Kind.NOTE, "bench floor", today, on="today")
            began = time.perf_counter()
            store.transact(lambda: store.entries.add(ctx.actor, patient_id, parsed), today)
            floor.append(time.perf_counter() - began)
    return {"entry_seconds": times, "floor_seconds": floor}


def measure_refresh(path: Path, today: date, run: int) -> dict:
    """refresh_all beside a plain read of the same rows; the order alternates between runs so
    neither always finds the other's pages cached. The first run also times reading them as Entry
    objects (`by_patient`), the tool's general read path."""
    out: dict = {}
    with Store(path) as store:
        ctx = _context(store, SUPERVISOR, today)

        def read() -> None:
            began = time.perf_counter()
            out["rows"] = store.bulk.scan_current_entries()
            out["read_seconds"] = time.perf_counter() - began

        def refresh() -> None:
            began = time.perf_counter()
            report = refresh_all(ctx)
            out["seconds"] = time.perf_counter() - began
            out["patients"], out["raised"], out["resolved"] = report.patients, report.raised, report.resolved

        for step in (read, refresh) if run % 2 == 0 else (refresh, read):
            step()
        if run == 0:
            began = time.perf_counter()
            sum(len(entries) for _, entries in store.entries.by_patient())
            out["entries_read_seconds"] = time.perf_counter() - began
    return out


def adopt(path: Path, today: date) -> None:
    """Map this process's OS account to the bench supervisor, so the command line acts as her."""
    with Store(path) as store:
        map_account(_context(store, ADMIN, today), SUPERVISOR, os_account())


def week_before(today: date) -> str:
    """The ISO week that ended before `today`'s week began, as 2026-W48."""
    year, week, _ = (today - timedelta(days=today.isoweekday())).isocalendar()
    return f"{year}-W{week:02d}"


def _summary(fmt: str) -> Callable[[Path, date, int], dict]:
    def measure(path: Path, today: date, run: int) -> dict:
        with tempfile.TemporaryDirectory() as folder:
            began = time.perf_counter()
            with Store(path) as store:
                out = export_summary(_context(store, SUPERVISOR, today), week_before(today), fmt,
                                     Path(folder) / f"summary.{fmt}", deidentify=False, render=write)  # fmt: skip
                size = out.stat().st_size
            return {"seconds": time.perf_counter() - began, "bytes": size}

    return measure


MEASURES: dict[str, Callable[[Path, date, int], dict]] = {
    "refresh": measure_refresh,
    "list": measure_list,
    "log": measure_log,
    "summary-json": _summary("json"),
    "summary-xlsx": _summary("xlsx"),
}


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m tools.bench.measure")
    parser.add_argument("name", choices=sorted(MEASURES))
    parser.add_argument("store", type=Path)
    parser.add_argument("--today", type=date.fromisoformat, required=True)
    parser.add_argument("--run", type=int, default=0)
    args = parser.parse_args(argv)
    before = peak_mb()
    result = MEASURES[args.name](args.store, args.today, args.run)
    json.dump({**result, "peak_mb": peak_mb(), "children_peak_mb": children_peak_mb(), "start_mb": before}, sys.stdout)


if __name__ == "__main__":
    main()
