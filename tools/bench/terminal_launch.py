"""The interface as a user meets it: launch to first drawn list, and idle CPU, as whole processes.

The interface runs in a pseudo-terminal of a given size on a copy of a bench store, signed in as
its supervisor (who sees every patient); "first drawn" is the moment the first row's patient id
reaches the terminal. Idle CPU is the process's own CPU time (all threads) over a quiet stretch
after the list is drawn, as a share of one core. Beside them, in this process: the interface from
its start to the first list drawn (no imports, no store opening), and the store's own check on
opening (SQLite's quick_check, which reads the whole file), the floor every launch pays.

    python -m tools.bench.terminal_launch STORE --today 2026-11-30 [--runs 5] [--idle 30] [--size 80x24]
"""

from __future__ import annotations

import argparse
import fcntl
import getpass
import json
import os
import pty
import select
import shutil
import signal
import statistics
import struct
import sys
import tempfile
import termios
import time
from datetime import date
from pathlib import Path

from caseload.application.clinic import Clinic, Identity

SUPERVISOR = "super-1"
BENCH_ADMIN_ACCOUNT = "admin"
DRAW_TIMEOUT = 60.0


def prepared_copy(store: Path, folder: Path, today: date) -> tuple[Path, str]:
    """A copy of `store` with this OS account mapped to the supervisor; and her first row's patient id."""
    copy = folder / "launch.db"
    shutil.copy(store, copy)
    with Clinic.open(copy, Identity(BENCH_ADMIN_ACCOUNT)) as admin:
        admin.map_account(SUPERVISOR, getpass.getuser())
    with Clinic.open(copy, Identity(getpass.getuser()), as_of=today) as clinic:
        first = clinic.morning_list()[0].patient.id
    return copy, first


def _cpu_seconds(pid: int) -> float:
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")  # utime + stime


def _drain(fd: int, seconds: float) -> None:
    end = time.perf_counter() + seconds
    while (left := end - time.perf_counter()) > 0:
        if select.select([fd], [], [], left)[0]:
            try:
                os.read(fd, 65536)
            except OSError:
                return


def one_launch(copy: Path, first: str, today: date, size: tuple[int, int], idle: float) -> dict:
    """Seconds from spawn to the first row on screen; CPU share over `idle` seconds after it."""
    began = time.perf_counter()
    pid, fd = pty.fork()
    if pid == 0:
        env = {**os.environ, "TERM": "xterm-256color"}
        command = [sys.executable, "-m", "caseload", "--db", str(copy), "--today", today.isoformat()]
        os.execve(sys.executable, command, env)
    fcntl.ioctl(fd, termios.TIOCSWINSZ, struct.pack("HHHH", size[1], size[0], 0, 0))
    seen, drawn = b"", None
    try:
        while drawn is None and time.perf_counter() - began < DRAW_TIMEOUT:
            if select.select([fd], [], [], 0.5)[0]:
                seen = (seen + os.read(fd, 65536))[-200_000:]
                if first.encode() in seen:
                    drawn = time.perf_counter() - began
        figures = {"first_drawn_s": None if drawn is None else round(drawn, 3)}
        if drawn is not None and idle:
            _drain(fd, 3.0)  # let the first load's stragglers finish
            cpu = _cpu_seconds(pid)
            _drain(fd, idle)
            figures["idle_cpu_pct"] = round(100 * (_cpu_seconds(pid) - cpu) / idle, 2)
        return figures
    finally:
        os.kill(pid, signal.SIGTERM)
        os.waitpid(pid, 0)
        os.close(fd)


def in_process(copy: Path, today: date, size: tuple[int, int]) -> float:
    """Seconds from the app's start to the first list drawn, the store already open."""
    import asyncio

    from caseload.tui.app import make_app
    from caseload.tui.widgets.caseload_table import CaseloadTable

    async def run() -> float:
        with Clinic.open(copy, Identity(getpass.getuser()), as_of=today) as clinic:
            app = make_app(clinic)
            began = time.perf_counter()
            async with app.run_test(size=size) as pilot:
                while not (app.screen.query(CaseloadTable) and app.screen.query_one(CaseloadTable).row_count):
                    await asyncio.sleep(0.002)
                await pilot.pause()  # the frame with the rows in it
                return time.perf_counter() - began

    return asyncio.run(run())


def open_check_seconds(copy: Path) -> float:
    """SQLite's quick_check of the whole file, as the store runs it on every opening."""
    import sqlite3

    conn = sqlite3.connect(copy)
    began = time.perf_counter()
    conn.execute("PRAGMA quick_check(1)").fetchone()
    conn.close()
    return time.perf_counter() - began


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m tools.bench.terminal_launch", description=__doc__.splitlines()[0])
    parser.add_argument("store", type=Path)
    parser.add_argument("--today", type=date.fromisoformat, required=True, help="the bench store's day")
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--idle", type=float, default=0.0, help="seconds of idle CPU to measure on the last run")
    parser.add_argument("--size", default="80x24", help="terminal COLUMNSxROWS")
    args = parser.parse_args(argv)
    size = tuple(int(n) for n in args.size.split("x"))
    with tempfile.TemporaryDirectory() as folder:
        copy, first = prepared_copy(args.store, Path(folder), args.today)
        runs = [one_launch(copy, first, args.today, size, args.idle if i == args.runs - 1 else 0)
                for i in range(args.runs)]
        inside = [in_process(copy, args.today, size) for _ in range(args.runs)]
        check = [open_check_seconds(copy) for _ in range(args.runs)]
    drawn = [r["first_drawn_s"] for r in runs if r["first_drawn_s"] is not None]
    print(json.dumps({"store": args.store.name, "size": args.size, "runs": runs,
                      "first_drawn_median_s": round(statistics.median(drawn), 3) if drawn else None,
                      "in_process_median_s": round(statistics.median(inside), 3),
                      "open_check_median_s": round(statistics.median(check), 3),
                      "idle_cpu_pct": runs[-1].get("idle_cpu_pct")}, indent=2))


if __name__ == "__main__":
    main()
