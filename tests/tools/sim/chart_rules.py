"""Small independent readings of a seed chart, used to check that each demo scenario shows what
it claims. They follow the published rules directly and share no code with the engine."""

from __future__ import annotations

import csv
from collections import defaultdict
from dataclasses import dataclass
from pathlib import Path

DISTURBED = {"illness", "poor-sleep", "alcohol", "late", "other"}


@dataclass(frozen=True)
class Row:
    patient: str
    day: int
    kind: str
    value: str
    time: str
    flags: tuple[str, ...]
    amended: bool
    voided: bool


def load_rows(path: Path) -> dict[str, list[Row]]:
    """Current rows per patient: voided rows dropped, an amended row replacing the one before it."""
    by_patient: dict[str, list[Row]] = defaultdict(list)
    with path.open(encoding="utf-8") as f:
        for r in csv.DictReader(f):
            row = Row(
                r["patient"], int(r["day_offset"]), r["kind"], r["value"], r["time"],
                tuple(x for x in r["flags"].split(";") if x), bool(r["amend_reason"]), bool(r["void_reason"]),
            )  # fmt: skip
            rows = by_patient[row.patient]
            if row.amended:
                previous = [i for i, old in enumerate(rows) if (old.day, old.kind) == (row.day, row.kind)]
                rows.pop(previous[-1])
            if not row.voided:
                rows.append(row)
    return by_patient


def celsius(raw: str) -> float:
    if raw.endswith("F"):
        return (float(raw[:-1]) - 32) / 1.8
    return float(raw)


def bleed_starts(rows: list[Row]) -> list[int]:
    """Day 1 of each cycle: first day of light flow or more after 3+ days without flow
    (flow days separated by at most 2 dry days are one bleed; spotting alone starts nothing, nor
    does a bleed flagged mid-cycle)."""
    flow_days = sorted(
        {r.day for r in rows if r.kind == "bleed" and r.value != "spotting" and "midcycle" not in r.flags}
    )
    starts: list[int] = []
    last = None
    for day in flow_days:
        if last is None or day - last > 3:
            starts.append(day)
        last = day
    return starts


def bleed_lengths(rows: list[Row]) -> list[int]:
    """Days from first to last bleeding day (spotting included) of each bleed."""
    days = sorted({r.day for r in rows if r.kind == "bleed"})
    runs: list[list[int]] = []
    for day in days:
        if runs and day - runs[-1][-1] <= 3:
            runs[-1].append(day)
        else:
            runs.append([day])
    return [run[-1] - run[0] + 1 for run in runs]


def readings(rows: list[Row], first: int, last: int) -> list[tuple[int, float]]:
    """Undisturbed temperatures (day, C) from `first` to `last` inclusive."""
    return [
        (r.day, celsius(r.value))
        for r in rows
        if r.kind == "temp" and first <= r.day <= last and not DISTURBED & set(r.flags)
    ]


@dataclass(frozen=True)
class Shift:
    first_high: int
    confirmed_on: int
    coverline: float


def three_over_six(temps: list[tuple[int, float]]) -> Shift | None:
    """Coverline form of the three-over-six rule (common practice): a reading 0.2 C above each of the previous six,
    coverline 0.1 C above their highest, confirmed by three consecutive readings above it."""
    for i in range(6, len(temps)):
        lows = [t for _, t in temps[i - 6 : i]]
        if temps[i][1] < max(lows) + 0.2 - 1e-9:
            continue
        coverline = max(lows) + 0.1
        run = temps[i : i + 3]
        if len(run) == 3 and all(t > coverline + 1e-9 for _, t in run):
            return Shift(temps[i][0], run[-1][0], coverline)
    return None


def cycles(rows: list[Row]) -> list[tuple[int, int]]:
    """(start, end) of each cycle, the open one ending on day 0."""
    starts = bleed_starts(rows)
    return [(s, e - 1) for s, e in zip(starts, starts[1:])] + ([(starts[-1], 0)] if starts else [])


def longest_silence(rows: list[Row], last_day: int = 0) -> int:
    """Most consecutive days with no entry at all between the first entry and `last_day`."""
    days = sorted({r.day for r in rows})
    gaps = [b - a - 1 for a, b in zip(days, days[1:])] + [last_day - days[-1]]
    return max(gaps)
