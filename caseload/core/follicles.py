"""Follicle tracking over the scans of the current cycle."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import Kind, Observation
from caseload.core.settings import Protocol


# Thessaloniki ESHRE/ASRM PCOS consensus 2008 (thresholds from memory): withhold hCG with more
# than 2 follicles of 16 mm or more, or one of 16 mm plus two of 14 mm.
THESSALONIKI_LARGE_MM, THESSALONIKI_MEDIUM_MM = 16.0, 14.0
EVANS_RULE, THESSALONIKI_RULE = 1, 2  # values of the `multiple_follicle_rule` protocol setting
# A follicle grows 1-2 mm a day (common practice); a structure within this of its size on an
# earlier scan has not grown.
NO_GROWTH_MM = 1.0
# Monitoring scans come every 1-3 days (common practice); the growth fit uses the latest run of
# scans no further apart than this, at most `GROWTH_FIT_SCANS` of them, so a baseline scan before
# the stimulation does not flatten the slope.
MAX_SCAN_GAP_DAYS = 4
GROWTH_FIT_SCANS = 3


@dataclass(frozen=True)
class FollicleScan:
    day: date
    lead_mm: float | None  # largest follicle, possible cysts left out
    mature_count: int  # follicles at or above `mature_follicle_mm` (Evans 2020), possible cysts left out
    endometrium_mm: float | None
    too_many: bool = False  # more mature follicles than the protocol's rule allows
    possible_cysts: tuple[float, ...] = ()  # sizes (mm) left out as possible cysts


@dataclass(frozen=True)
class Follicles:
    scans: tuple[FollicleScan, ...]  # oldest first
    lead_mm: float | None  # at the latest scan
    mature_count: int  # at the latest scan
    growth_mm_per_day: float | None  # slope of the lead across the latest monitoring scans; needs two days
    trigger_day: date | None  # when the lead reached, or is projected to reach, `trigger_follicle_mm`
    trigger_reached: bool
    endometrium_mm: float | None  # latest measured
    possible_cysts: tuple[float, ...] = ()  # at the latest scan


def too_many(sizes: list[float], protocol: Protocol) -> bool:
    """More mature follicles than the protocol's rule allows."""
    if protocol.multiple_follicle_rule == THESSALONIKI_RULE:
        large = sum(1 for s in sizes if s >= THESSALONIKI_LARGE_MM)
        medium = sum(1 for s in sizes if THESSALONIKI_MEDIUM_MM <= s < THESSALONIKI_LARGE_MM)
        return large > 2 or (large >= 1 and medium >= 2)
    return sum(1 for s in sizes if s >= protocol.mature_follicle_mm) > protocol.max_mature_follicles


def _cysts(sizes: tuple[float, ...], day: date, others: list[tuple[date, tuple[float, ...]]], protocol: Protocol) -> list[float]:
    """Sizes of `cyst_mm` or more that another scan, a day or more apart, showed unchanged."""
    return [
        s
        for s in sizes
        if s >= protocol.cyst_mm
        and any(abs((day - d).days) >= 1 and any(abs(s - e) <= NO_GROWTH_MM for e in seen) for d, seen in others)
    ]


def follicle_scans(observations: list[Observation], protocol: Protocol) -> tuple[FollicleScan, ...]:
    raw = sorted(
        ((o.day, o.value.scan.follicles_mm, o.value.scan.endometrium_mm) for o in observations
         if o.kind == Kind.SCAN and o.value.scan is not None),
        key=lambda t: t[0],
    )  # fmt: skip
    scans = []
    for day, sizes, endometrium in raw:
        cysts = _cysts(sizes, day, [(d, s) for d, s, _ in raw], protocol)
        follicles_only = list(sizes)
        for c in cysts:
            follicles_only.remove(c)
        scans.append(
            FollicleScan(
                day=day,
                lead_mm=max(follicles_only, default=None),
                mature_count=sum(1 for s in follicles_only if s >= protocol.mature_follicle_mm),
                endometrium_mm=endometrium,
                too_many=too_many(follicles_only, protocol),
                possible_cysts=tuple(cysts),
            )
        )
    return tuple(scans)


def _slope(points: list[tuple[float, float]]) -> float | None:
    if len({x for x, _ in points}) < 2:
        return None
    mx = sum(x for x, _ in points) / len(points)
    my = sum(y for _, y in points) / len(points)
    return sum((x - mx) * (y - my) for x, y in points) / sum((x - mx) ** 2 for x, _ in points)


def monitoring_scans(scans: tuple[FollicleScan, ...], stimulation_start: date | None) -> list[FollicleScan]:
    """The scans the growth fit uses: the latest run no more than `MAX_SCAN_GAP_DAYS` apart, from
    the stimulation's first medication day when one is logged, at most `GROWTH_FIT_SCANS`."""
    run = [s for s in scans if s.lead_mm is not None and (stimulation_start is None or s.day >= stimulation_start)]
    for i in range(len(run) - 1, 0, -1):
        if (run[i].day - run[i - 1].day).days > MAX_SCAN_GAP_DAYS:
            run = run[i:]
            break
    return run[-GROWTH_FIT_SCANS:]


def follicles(observations: list[Observation], protocol: Protocol) -> Follicles | None:
    """Lead follicle, mature count, growth rate and trigger-size day; None without scans."""
    scans = follicle_scans(observations, protocol)
    if not scans:
        return None
    latest = scans[-1]
    meds = [o.day for o in observations if o.kind == Kind.MED]
    fitted = monitoring_scans(scans, min(meds) if meds else None)
    origin = fitted[0].day if fitted else latest.day
    points = [((s.day - origin).days, s.lead_mm) for s in fitted]
    growth = _slope(points)
    reached = next((s.day for s in scans if s.lead_mm is not None and s.lead_mm >= protocol.trigger_follicle_mm), None)
    trigger_day = reached
    if reached is None and growth is not None and growth > 0:
        mean_x = sum(x for x, _ in points) / len(points)
        mean_y = sum(y for _, y in points) / len(points)
        x_at = mean_x + (protocol.trigger_follicle_mm - mean_y) / growth
        trigger_day = max(origin + timedelta(days=math.ceil(x_at - 1e-9)), latest.day)
    endometrium = next((s.endometrium_mm for s in reversed(scans) if s.endometrium_mm is not None), None)
    return Follicles(
        scans=scans,
        lead_mm=latest.lead_mm,
        mature_count=latest.mature_count,
        growth_mm_per_day=None if growth is None else round(growth, 2),
        trigger_day=trigger_day,
        trigger_reached=reached is not None,
        endometrium_mm=endometrium,
        possible_cysts=latest.possible_cysts,
    )
