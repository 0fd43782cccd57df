"""Summary statistics over the most recent complete cycles."""

from __future__ import annotations

import math
import statistics
from dataclasses import dataclass


@dataclass(frozen=True)
class CycleStats:
    """Cycle-length statistics; every figure but `count` is None when there are too few cycles."""

    count: int
    mean: float | None
    sd: float | None  # sample SD, needs two cycles
    median: float | None
    shortest: int | None
    longest: int | None
    variation: int | None  # longest - shortest
    bleed_median: float | None


def cycle_stats(lengths: list[int], bleed_days: list[int]) -> CycleStats:
    """Statistics of the given cycle lengths and their bleed lengths (already limited to the window)."""
    if not lengths:
        return CycleStats(0, None, None, None, None, None, None, None)
    return CycleStats(
        count=len(lengths),
        mean=round(statistics.fmean(lengths), 2),
        sd=round(_sample_sd(lengths), 2) if len(lengths) > 1 else None,
        median=statistics.median(lengths),
        shortest=min(lengths),
        longest=max(lengths),
        variation=max(lengths) - min(lengths),
        bleed_median=statistics.median(bleed_days) if bleed_days else None,
    )


def _sample_sd(lengths: list[int]) -> float:
    """The sample SD of whole-day lengths from exact integer sums: the same figure as
    `statistics.stdev` to the last bit or one below it, an order of magnitude faster (it runs for
    every window the irregular-cycles alert looks back over, on every refresh)."""
    n, total = len(lengths), sum(lengths)
    return math.sqrt((n * sum(x * x for x in lengths) - total * total) / (n * (n - 1)))
