"""Follicle tracking over the scans of the current cycle."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import Kind, Observation
from caseload.core.settings import Protocol


@dataclass(frozen=True)
class FollicleScan:
    day: date
    lead_mm: float | None
    mature_count: int  # follicles at or above `mature_follicle_mm` (Evans 2020)
    endometrium_mm: float | None


@dataclass(frozen=True)
class Follicles:
    scans: tuple[FollicleScan, ...]  # oldest first
    lead_mm: float | None  # at the latest scan
    mature_count: int  # at the latest scan
    growth_mm_per_day: float | None  # slope of the lead across scans; needs two days
    trigger_day: date | None  # when the lead reached, or is projected to reach, `trigger_follicle_mm`
    trigger_reached: bool
    endometrium_mm: float | None  # latest measured


def follicle_scans(observations: list[Observation], protocol: Protocol) -> tuple[FollicleScan, ...]:
    scans = []
    for obs in observations:
        if obs.kind != Kind.SCAN or obs.value.scan is None:
            continue
        sizes = obs.value.scan.follicles_mm
        scans.append(
            FollicleScan(
                day=obs.day,
                lead_mm=max(sizes, default=None),
                mature_count=sum(1 for s in sizes if s >= protocol.mature_follicle_mm),
                endometrium_mm=obs.value.scan.endometrium_mm,
            )
        )
    return tuple(sorted(scans, key=lambda s: s.day))


def _slope(points: list[tuple[float, float]]) -> float | None:
    if len({x for x, _ in points}) < 2:
        return None
    mx = sum(x for x, _ in points) / len(points)
    my = sum(y for _, y in points) / len(points)
    return sum((x - mx) * (y - my) for x, y in points) / sum((x - mx) ** 2 for x, _ in points)


def follicles(observations: list[Observation], protocol: Protocol) -> Follicles | None:
    """Lead follicle, mature count, growth rate and trigger-size day; None without scans."""
    scans = follicle_scans(observations, protocol)
    if not scans:
        return None
    latest = scans[-1]
    origin = scans[0].day
    points = [((s.day - origin).days, s.lead_mm) for s in scans if s.lead_mm is not None]
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
    )
