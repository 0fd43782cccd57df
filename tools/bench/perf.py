"""Cost figures per bench size: each measurement run in its own interpreter, then summarised.

In-process figures (refresh, list, log) time the work after the imports; whole-process figures
(`caseload list --json`, the interface's launch) time a fresh process from its start, beside their
floors: Python starting alone, a bare Textual app drawing as many rows. The package is byte-compiled
first, as pip compiles an installed one: a checkout run under PYTHONDONTWRITEBYTECODE would compile
every module again in each process, which no installed caseload does. Each figure is the median
(and 95th percentile) of the runs. Targets are the goals stated for 2,000 patients x 2 years.
"""

from __future__ import annotations

import compileall
import json
import os
import shutil
import statistics
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path

import platformdirs

import caseload
from tools.bench.build import BenchStore, BenchSpec
from tools.bench.measure import MEASURES, adopt

CACHE = platformdirs.user_cache_path("caseload-bench")  # built stores and results, outside the repository

# Goals at 2,000 patients x 2 years.
LIST_JSON_TARGET_S = 0.4  # `caseload list --json` as a process
LAUNCH_TARGET_S = 1.0  # interface, process start to first drawn list
LOG_TARGET_MS = 10.0  # median
LOG_P95_TARGET_MS = 20.0
REFRESH_RATIO_TARGET = 0.5  # morning refresh over the bare read of all entry rows
IDLE_TARGET_PCT = 0.5  # of one core
SUMMARY_TARGET_S = 3.0
PEAK_TARGET_MB = 150.0
IDLE_S = 10.0  # seconds the interface sits idle while its CPU time is counted
TARGET_PATIENTS = 2000  # the targets are stated for this caseload size
HEAVY_ENTRIES = 3_000_000  # above this a full refresh takes a minute: at most HEAVY_RUNS runs of it
HEAVY_RUNS = 3
LINEAR_SLACK = 1.5  # per-patient cost may grow this much from the smallest to the largest size


@dataclass(frozen=True)
class Target:
    what: str
    size: str
    value: float
    limit: float
    unit: str
    met: bool


def run_once(name: str, store: Path, spec: BenchSpec, run: int) -> dict:
    """One run of a measurement in a fresh interpreter; its JSON result."""
    command = [sys.executable, "-m", "tools.bench.measure", name, str(store), "--today", spec.today.isoformat(),
               "--run", str(run)]  # fmt: skip
    done = subprocess.run(command, capture_output=True, text=True)
    if done.returncode != 0:
        last = (done.stderr.strip().splitlines() or ["no message"])[-1]
        return {"error": last}
    return json.loads(done.stdout)


def run_process(command: list[str], env: dict | None = None) -> dict:
    """A whole process, timed from just before it starts to its end."""
    began = time.perf_counter()
    done = subprocess.run(command, capture_output=True, text=True, stdin=subprocess.DEVNULL, env=env)
    seconds = time.perf_counter() - began
    if done.returncode != 0:
        return {"error": (done.stderr.strip().splitlines() or ["no message"])[-1]}
    return {"seconds": seconds}


def run_launch(args: list[str]) -> dict:
    """One headless launch (`tools.bench.launch`); `seconds` from just before the process starts to
    the list drawn."""
    began = time.time()
    done = subprocess.run([sys.executable, "-m", "tools.bench.launch", *args], capture_output=True, text=True,
                          stdin=subprocess.DEVNULL)  # fmt: skip
    if done.returncode != 0:
        return {"error": (done.stderr.strip().splitlines() or ["no message"])[-1]}
    out = json.loads(done.stdout)
    return {**out, "seconds": out["drawn_at"] - began}


def process_figures(copy: Path, spec: BenchSpec, rows: int, runs: int, say=print, idle_s: float = IDLE_S) -> dict:
    """The whole-process figures on a working copy of a bench store, each beside its floor."""
    today = spec.today.isoformat()
    compileall.compile_dir(Path(caseload.__file__).parent, quiet=1)
    adopt(copy, spec.today)  # this OS account acts as the bench supervisor
    env = {**os.environ, "CASELOAD_DB": str(copy)}
    commands = {
        "python": lambda r: run_process([sys.executable, "-c", "pass"]),
        "list-json": lambda r: run_process([sys.executable, "-m", "caseload", "--today", today, "list", "--json"], env),
        "launch": lambda r: run_launch([str(copy), "--today", today]),
        "launch-floor": lambda r: run_launch(["--bare", str(rows)]),
    }
    figures = {}
    for name, once in commands.items():
        say(f"  {spec.name}: {name} x{runs}")
        figures[name] = summarise_process([once(r) for r in range(runs)])
    say(f"  {spec.name}: idle interface, {idle_s:g} s")
    idle = run_launch([str(copy), "--today", today, "--idle", str(idle_s)])
    figures["idle"] = {"missing": idle["error"]} if "error" in idle else {
        "cpu_s": round(idle["idle_cpu_seconds"], 4), "seconds": idle_s, "peak_mb": idle["peak_mb"],
        "pct_of_core": round(100 * idle["idle_cpu_seconds"] / idle_s, 3)}  # fmt: skip
    return figures


def summarise_process(runs: list[dict]) -> dict:
    errors = [r["error"] for r in runs if "error" in r]
    if errors:
        return {"missing": errors[0]}
    times = [r["seconds"] for r in runs]
    out = {"runs": len(runs), "median_s": _median(times), "p95_s": _p95(times)}
    if "in_process_seconds" in runs[0]:
        out.update(in_process_median_s=_median([r["in_process_seconds"] for r in runs]), rows=runs[0]["rows"],
                   peak_mb=max(r["peak_mb"] for r in runs))  # fmt: skip
    return out


def _median(values: list[float]) -> float:
    return round(statistics.median(values), 4)


def _p95(values: list[float]) -> float:
    ordered = sorted(values)
    return round(ordered[min(len(ordered) - 1, round(0.95 * (len(ordered) - 1)))], 4)


def summarise(name: str, runs: list[dict]) -> dict:
    """The figures of one measurement over its runs; `missing` when it could not run."""
    errors = [r["error"] for r in runs if "error" in r]
    if errors:
        return {"missing": errors[0]}
    out = {"runs": len(runs), "peak_mb": max(r["peak_mb"] for r in runs), "start_mb": min(r["start_mb"] for r in runs),
           "children_peak_mb": max(r.get("children_peak_mb", 0.0) for r in runs)}
    if name == "log":
        times = [t * 1000 for r in runs for t in r["entry_seconds"]]
        floor = [t * 1000 for r in runs for t in r.get("floor_seconds", [])]
        out.update(entries=len(times), median_ms=_median(times), p95_ms=_p95(times), max_ms=round(max(times), 2))
        if floor:
            out.update(floor_median_ms=_median(floor), floor_p95_ms=_p95(floor))
        return out
    out["median_s"] = _median([r["seconds"] for r in runs])
    out["runs_s"] = [round(r["seconds"], 4) for r in runs]
    if name == "list":
        out["lines"] = runs[0]["lines"]
        out["nurse_median_s"] = _median([r["nurse_seconds"] for r in runs])
        out["nurse_lines"] = runs[0]["nurse_lines"]
    if name == "refresh":
        read = _median([r["read_seconds"] for r in runs])
        entries_read = runs[0]["entries_read_seconds"]
        out.update(rows=runs[0]["rows"], read_median_s=read, ratio=round(out["median_s"] / read, 2),
                   entries_read_s=round(entries_read, 3), ratio_to_entries=round(out["median_s"] / entries_read, 2))  # fmt: skip
    if name.startswith("summary"):
        out["bytes"] = runs[0]["bytes"]
    return out


def measure_size(built: BenchStore, work: Path, runs: int, say=print, only: tuple[str, ...] = (),
                 idle_s: float = IDLE_S) -> dict:  # fmt: skip
    """Every measurement (or those named in `only`) on a working copy of the bench store (the
    cached one stays untouched)."""
    work.mkdir(parents=True, exist_ok=True)
    copy = work / f"{built.spec.name}.db"
    began = time.perf_counter()
    shutil.copyfile(built.path, copy)
    copied = time.perf_counter() - began
    figures = {}
    try:
        for name in only or MEASURES:  # refresh first: the list is measured after a morning refresh
            count = min(runs, HEAVY_RUNS) if name == "refresh" and built.entries > HEAVY_ENTRIES else runs
            say(f"  {built.spec.name}: {name} x{count}")
            figures[name] = summarise(name, [run_once(name, copy, built.spec, r) for r in range(count)])
        if not only:
            rows = figures["list"].get("lines", built.patients)
            figures.update(process_figures(copy, built.spec, rows, runs, say, idle_s))
    finally:
        copy.unlink(missing_ok=True)
    return {
        "size": built.spec.name,
        "patients": built.patients,
        "years": built.spec.years,
        "entries": built.entries,
        "store_mb": round(built.path.stat().st_size / 1e6, 1),
        "build": {"load_s": built.load_seconds, "first_refresh_s": built.refresh_seconds, "reused": built.reused,
                  "copy_s": round(copied, 2)},  # fmt: skip
        "figures": figures,
    }


def _value(figures: dict, name: str, key: str) -> float | None:
    return figures.get(name, {}).get(key)


def targets(sizes: list[dict]) -> list[Target]:
    """The goals at the 2,000-patient size (else the nearest), and memory at every size."""
    measured = [s for s in sizes if "list" in s["figures"]]
    if not measured:
        return []
    at = min(measured, key=lambda s: (abs(s["patients"] - TARGET_PATIENTS), -s["entries"]))
    f, found = at["figures"], []
    checks = (
        ("morning refresh / bare read of all rows", "refresh", "ratio", REFRESH_RATIO_TARGET, "x"),
        ("`caseload list --json` as a process", "list-json", "median_s", LIST_JSON_TARGET_S, "s"),
        ("interface launch to first drawn list", "launch", "median_s", LAUNCH_TARGET_S, "s"),
        ("log one entry, median", "log", "median_ms", LOG_TARGET_MS, "ms"),
        ("log one entry, p95", "log", "p95_ms", LOG_P95_TARGET_MS, "ms"),
        ("idle interface CPU", "idle", "pct_of_core", IDLE_TARGET_PCT, "% of a core"),
        ("weekly summary json", "summary-json", "median_s", SUMMARY_TARGET_S, "s"),
        ("weekly summary xlsx", "summary-xlsx", "median_s", SUMMARY_TARGET_S, "s"),
    )
    for what, name, key, limit, unit in checks:
        value = _value(f, name, key)
        if value is not None:
            found.append(Target(what, at["size"], value, limit, unit, value <= limit))
    for size in measured:
        peaks = [m["peak_mb"] for m in size["figures"].values() if "peak_mb" in m]
        if peaks:
            found.append(Target("peak memory", size["size"], max(peaks), PEAK_TARGET_MB, "MB", max(peaks) <= PEAK_TARGET_MB))
    return found


GROWTH = (
    ("morning list (s)", "list", "median_s", "patients"),
    ("interface launch (s)", "launch", "median_s", "patients"),
    ("log one entry, median (ms)", "log", "median_ms", None),
    ("refresh (s)", "refresh", "median_s", "entries"),
    ("plain read (s)", "refresh", "read_median_s", "entries"),
    ("summary json (s)", "summary-json", "median_s", "patients"),
    ("summary xlsx (s)", "summary-xlsx", "median_s", "patients"),
)


def growth(sizes: list[dict]) -> list[dict]:
    """Each figure's cost per unit (per patient or per 1,000 entries) at each size, and whether it
    stays flat from the smallest to the largest size, which is what linear growth means."""
    ordered = sorted((s for s in sizes if "list" in s["figures"]), key=lambda s: s["entries"])
    rows = []
    for label, name, key, per in GROWTH:
        values = [_value(s["figures"], name, key) for s in ordered]
        if any(v is None for v in values):
            continue
        if per is None:  # one entry's cost should not depend on the caseload's size at all
            units = values
        else:
            units = [v / (s[per] / (1000 if per == "entries" else 1)) for v, s in zip(values, ordered)]
        ratio = units[-1] / units[0] if units[0] else None
        rows.append({
            "figure": label,
            "per": "entry logged" if per is None else ("patient" if per == "patients" else "1,000 entries"),
            "values": dict(zip((s["size"] for s in ordered), values)),
            "unit_costs": dict(zip((s["size"] for s in ordered), (round(u, 6) for u in units))),
            "largest_over_smallest": None if ratio is None else round(ratio, 2),
            "linear": None if ratio is None or len(ordered) < 2 else ratio <= LINEAR_SLACK,
        })  # fmt: skip
    return rows
