"""Cost figures per bench size: each measurement run in its own interpreter, then summarised.

Each figure is the median of the runs. Targets come from the design (Performance section).
"""

from __future__ import annotations

import json
import shutil
import statistics
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from tools.bench.build import BenchStore, BenchSpec
from tools.bench.measure import MEASURES

# Design targets: morning list, one logged entry, refresh over a plain read, summary, memory.
LIST_TARGET_S = 0.5
LOG_TARGET_MS = 30.0
REFRESH_RATIO_TARGET = 2.0
SUMMARY_TARGET_S = 3.0
PEAK_TARGET_MB = 300.0
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
    out = {"runs": len(runs), "peak_mb": max(r["peak_mb"] for r in runs), "start_mb": min(r["start_mb"] for r in runs)}
    if name == "log":
        times = [t * 1000 for r in runs for t in r["entry_seconds"]]
        return {**out, "entries": len(times), "median_ms": _median(times), "p95_ms": _p95(times), "max_ms": round(max(times), 2)}
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


def measure_size(built: BenchStore, work: Path, runs: int, say=print) -> dict:
    """Every measurement on a working copy of the bench store (the cached one stays untouched)."""
    work.mkdir(parents=True, exist_ok=True)
    copy = work / f"{built.spec.name}.db"
    began = time.perf_counter()
    shutil.copyfile(built.path, copy)
    copied = time.perf_counter() - began
    figures = {}
    try:
        for name in MEASURES:  # refresh first: the list is measured after a morning refresh
            count = min(runs, HEAVY_RUNS) if name == "refresh" and built.entries > HEAVY_ENTRIES else runs
            say(f"  {built.spec.name}: {name} x{count}")
            figures[name] = summarise(name, [run_once(name, copy, built.spec, r) for r in range(count)])
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
    """The design's targets at the 2,000-patient size (else the largest), and memory at every size."""
    if not sizes:
        return []
    at = min(sizes, key=lambda s: (abs(s["patients"] - TARGET_PATIENTS), -s["entries"]))
    f, found = at["figures"], []
    checks = (
        ("morning list", "list", "median_s", LIST_TARGET_S, "s"),
        ("log one entry (median)", "log", "median_ms", LOG_TARGET_MS, "ms"),
        ("refresh / plain read", "refresh", "ratio", REFRESH_RATIO_TARGET, "x"),
        ("weekly summary json", "summary-json", "median_s", SUMMARY_TARGET_S, "s"),
        ("weekly summary xlsx", "summary-xlsx", "median_s", SUMMARY_TARGET_S, "s"),
    )
    for what, name, key, limit, unit in checks:
        value = _value(f, name, key)
        if value is not None:
            found.append(Target(what, at["size"], value, limit, unit, value <= limit))
    for size in sizes:
        peaks = [m["peak_mb"] for m in size["figures"].values() if "peak_mb" in m]
        if peaks:
            found.append(Target("peak memory", size["size"], max(peaks), PEAK_TARGET_MB, "MB", max(peaks) <= PEAK_TARGET_MB))
    return found


GROWTH = (
    ("morning list (s)", "list", "median_s", "patients"),
    ("log one entry, median (ms)", "log", "median_ms", None),
    ("refresh (s)", "refresh", "median_s", "entries"),
    ("plain read (s)", "refresh", "read_median_s", "entries"),
    ("summary json (s)", "summary-json", "median_s", "patients"),
    ("summary xlsx (s)", "summary-xlsx", "median_s", "patients"),
)


def growth(sizes: list[dict]) -> list[dict]:
    """Each figure's cost per unit (per patient or per 1,000 entries) at each size, and whether it
    stays flat from the smallest to the largest size, which is what linear growth means."""
    ordered = sorted(sizes, key=lambda s: s["entries"])
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
