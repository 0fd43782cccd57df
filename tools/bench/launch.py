"""One launch of the interface on a bench store, headless, in a fresh interpreter; or of its floor.

    python -m tools.bench.launch STORE --today DAY [--idle SECONDS]
    python -m tools.bench.launch --bare ROWS [--idle SECONDS]

Prints one JSON object: the wall-clock moment the first list was drawn (the caller started its
clock before starting this process), the in-process time from building the app to that moment,
how many rows the list holds, the process CPU time spent over `--idle` seconds of sitting idle
afterwards (once the store check the launch starts is done), and the peak memory. `--bare` is the
floor: a plain Textual app drawing a table of as many rows of the same six columns, with nothing
read from a store.
"""

from __future__ import annotations

import argparse
import asyncio
import json
import sys
import time
from datetime import date
from pathlib import Path

from textual.app import App, ComposeResult
from textual.widgets import DataTable

from caseload.application.clinic import Clinic, Identity
from caseload.store import Store
from caseload.tui.app import make_app
from caseload.tui.screens.caseload import STORE_CHECK_DELAY_S, CaseloadScreen
from tools.bench.process import SUPERVISOR, peak_mb

SIZE = (160, 50)  # a large terminal: columns and rows drawn
STEP_S = 0.005  # how often the driver looks whether the list is up
GIVE_UP_S = 300.0  # a list not up by then will not come: the run fails


class BareList(App):
    """The floor: a table of `rows` rows, filled when the app mounts."""

    def __init__(self, rows: int):
        super().__init__()
        self.rows = rows

    def compose(self) -> ComposeResult:
        yield DataTable()

    def on_mount(self) -> None:
        table = self.query_one(DataTable)
        table.add_columns("patient", "alerts", "cycle day", "phase", "next", "last entry")
        table.add_rows([(f"P{i:05d}", "window approaching", str(i % 35), "follicular", "LH test", "1 d")
                        for i in range(self.rows)])  # fmt: skip


def _drawn_rows(app: App) -> int | None:
    """The rows of the list once it is up, else None."""
    if isinstance(app, BareList):
        tables = app.query(DataTable)
        return tables.first().row_count if tables and tables.first().row_count == app.rows else None
    if isinstance(app.screen, CaseloadScreen) and app.roster:
        return len(app.roster)
    return None


async def _drive(app: App, idle_s: float) -> dict:
    began = time.perf_counter()
    async with app.run_test(size=SIZE) as pilot:
        while (rows := _drawn_rows(app)) is None:
            if time.perf_counter() - began > GIVE_UP_S:
                raise SystemExit(f"no list drawn after {GIVE_UP_S:g} s (screen {type(app.screen).__name__})")
            # A plain sleep: the pilot's own pause forces a screen update each time, which would steal
            # the interpreter from the list's read in its worker thread, as no terminal does.
            await asyncio.sleep(STEP_S)
        await pilot.pause()  # the frame with the list in it
        drawn_at, in_process = time.time(), time.perf_counter() - began
        if idle_s:  # at rest: the whole-file store check the launch starts is done first
            await asyncio.sleep(STORE_CHECK_DELAY_S)
            await app.workers.wait_for_complete()
        cpu = time.process_time()
        await asyncio.sleep(idle_s)
        idle_cpu = time.process_time() - cpu
    return {"drawn_at": drawn_at, "in_process_seconds": in_process, "rows": rows, "idle_seconds": idle_s,
            "idle_cpu_seconds": idle_cpu}  # fmt: skip


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m tools.bench.launch")
    parser.add_argument("store", type=Path, nargs="?")
    parser.add_argument("--today", type=date.fromisoformat)
    parser.add_argument("--bare", type=int, metavar="ROWS", help="the floor: a plain table of ROWS rows")
    parser.add_argument("--idle", type=float, default=0.0, help="seconds to sit idle once drawn (default 0)")
    args = parser.parse_args(argv)
    if args.bare is None and (args.store is None or args.today is None):
        parser.error("give STORE and --today, or --bare ROWS")
    if args.bare is not None:
        result = asyncio.run(_drive(BareList(args.bare), args.idle))
    else:
        # The bench morning as the clinic's date of record: the snapshots are current, no refresh runs.
        with Store(args.store) as store:
            account = store.staff.get(SUPERVISOR).os_account  # the bench may have mapped her to this one
        clinic = Clinic.open(args.store, Identity(account), date_of_record=args.today)
        try:
            result = asyncio.run(_drive(make_app(clinic), args.idle))
        finally:
            clinic.close()
    json.dump({**result, "peak_mb": peak_mb()}, sys.stdout)


if __name__ == "__main__":
    main()
