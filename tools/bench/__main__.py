"""`python -m tools.bench`: what the tool costs as the caseload grows, and how good it is.

    python -m tools.bench                      200x2, 2000x2 and 10000x2, 5 runs each, and log cost
                                               at 200 patients with 1, 2 and 5 years of history
    python -m tools.bench --sizes 2000x2 --history ""
    python -m tools.bench --quick --accuracy   200x1 only, with a smaller accuracy sample
    python -m tools.bench --skip-perf --accuracy

Bench stores are built once and cached under --folder (outside the repository); results go to --out
as JSON and a markdown file beside it, whose first tables are the README's Speed tables.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import shlex
import sqlite3
import sys
import time
from pathlib import Path

from rich.console import Console

from tools.bench.accuracy import ACCURACY_SEED, run_accuracy, shift_sweep
from tools.bench.build import bench_store, parse_sizes
from tools.bench.perf import CACHE, growth, measure_size, targets
from tools.bench.report import headline_markdown, markdown, print_report, target_dicts

DEFAULT_SIZES = "200x2,2000x2,10000x2"
DEFAULT_HISTORY = "200x1,200x2,200x5"  # log cost as the history grows, the caseload's size aside


def _args(argv: list[str] | None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(prog="python -m tools.bench", description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default=DEFAULT_SIZES, help=f"PATIENTSxYEARS,... (default {DEFAULT_SIZES})")
    parser.add_argument("--history", default=DEFAULT_HISTORY,
                        help=f"sizes at which only logging is timed, by length of history (default {DEFAULT_HISTORY}; '' for none)")
    parser.add_argument("--runs", type=int, default=5, help="runs per figure, each in a fresh process (default 5)")
    parser.add_argument("--folder", type=Path, default=CACHE, help=f"cache of built stores and results (default {CACHE})")
    parser.add_argument("--out", type=Path, help="results JSON (default FOLDER/results.json)")
    parser.add_argument("--quick", action="store_true", help="200x1 only, 3 runs, a smaller accuracy sample")
    parser.add_argument("--accuracy", action="store_true", help="also measure accuracy on simulated charts")
    parser.add_argument("--skip-perf", action="store_true", help="no cost figures (with --accuracy: accuracy alone)")
    parser.add_argument("--patients", type=int, default=1000, help="accuracy: simulated patients (default 1000)")
    parser.add_argument("--daily-patients", type=int, default=400,
                        help="accuracy: of those, analysed on every day of their year (default 400)")
    parser.add_argument("--sweep-women", type=int, default=150,
                        help="accuracy: simulated women per noise SD and chart type in the thermal-shift sweep (default 150)")
    args = parser.parse_args(argv)
    if args.quick:
        args.sizes, args.history, args.runs = "200x1", "", min(args.runs, 3)
        args.patients, args.daily_patients = min(args.patients, 200), min(args.daily_patients, 60)
        args.sweep_women = min(args.sweep_women, 40)
    if args.runs < 1 or args.patients < 1 or args.daily_patients < 0:
        parser.error("--runs and --patients must be 1 or more, --daily-patients 0 or more")
    try:
        args.specs = parse_sizes(args.sizes)
        args.history_specs = parse_sizes(args.history) if args.history.strip() else []
    except ValueError as err:
        parser.error(str(err))
    args.out = args.out or args.folder / "results.json"
    return args


def machine() -> str:
    cpuinfo = Path("/proc/cpuinfo")
    names = [line.split(":", 1)[1].strip() for line in cpuinfo.read_text().splitlines()
             if line.startswith("model name")] if cpuinfo.exists() else []  # fmt: skip
    return f"{names[0] + ', ' if names else ''}{os.cpu_count()} cores, Python {platform.python_version()}, SQLite {sqlite3.sqlite_version}, {platform.system()}"


def main(argv: list[str] | None = None) -> None:
    args = _args(argv)
    console = Console(stderr=True)
    began = time.perf_counter()
    given = shlex.join(sys.argv[1:] if argv is None else argv)
    result: dict = {"command": f"python -m tools.bench {given}".strip(),
                    "machine": machine(), "date": datetime.date.today().isoformat(), "runs": args.runs,
                    "sizes": []}  # fmt: skip
    if not args.skip_perf:
        (args.folder / "stores").mkdir(parents=True, exist_ok=True)
        for spec in args.specs:
            console.print(f"[bold]{spec.name}[/bold]: bench store")
            built = bench_store(spec, args.folder / "stores")
            console.print(f"  {'reused' if built.reused else 'built'}: {built.entries:,} entries, load {built.load_seconds} s")
            result["sizes"].append(measure_size(built, args.folder / "work", args.runs, say=console.print))
        for spec in args.history_specs:
            console.print(f"[bold]{spec.name}[/bold]: log by length of history")
            built = bench_store(spec, args.folder / "stores")
            result["sizes"].append(measure_size(built, args.folder / "work", args.runs, console.print, only=("log",)))
        result["targets"] = target_dicts(targets(result["sizes"]))
        result["growth"] = growth(result["sizes"])
    if args.accuracy:
        console.print(f"[bold]accuracy[/bold]: {args.patients} patients, {args.daily_patients} day by day")
        result["accuracy"] = run_accuracy(args.patients, args.daily_patients, ACCURACY_SEED)
        console.print(f"[bold]thermal-shift sweep[/bold]: {args.sweep_women} women per noise SD and chart type")
        result["accuracy"]["shift_sweep"] = shift_sweep(args.sweep_women, ACCURACY_SEED)
    result["elapsed_s"] = round(time.perf_counter() - began, 1)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(result, indent=2))
    args.out.with_suffix(".md").write_text(markdown(result))
    print_report(Console(), result)
    print("\n".join(headline_markdown(result)))
    console.print(f"written: {args.out} and {args.out.with_suffix('.md')}")


if __name__ == "__main__":
    main()
