"""Ovulation markers of one cycle: LH surge, mucus peak, and the retrospective ovulation estimate."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.model import MUCUS_PEAK_LEVEL, MUCUS_SCALE, Kind, Observation
from caseload.core.settings import Protocol
from caseload.core.thermal import ThermalShift

POSITIVE = "positive"
_MUCUS_LEVEL = {word: level for level, word in enumerate(MUCUS_SCALE)}

# Order of trust for dating ovulation, most trusted first. The LH surge precedes ovulation by a
# narrow, well-measured interval (WHO Task Force 1980); the thermal shift only follows it, dating
# it to a range of days (Hilgers 1980); the mucus peak is a self-observation and the least exact.
OVULATION_METHODS: tuple[str, ...] = ("lh", "shift", "mucus")


@dataclass(frozen=True)
class Markers:
    lh_surge: date | None  # first positive LH test of the cycle
    mucus_peak: date | None  # last peak-type mucus day followed by a less fertile day
    ovulation: date | None
    ovulation_method: str | None  # one of OVULATION_METHODS


def lh_positive(obs: Observation, protocol: Protocol) -> bool:
    if obs.value.word is not None:
        return obs.value.word == POSITIVE
    return obs.value.number is not None and obs.value.number >= protocol.lh_positive_iu_l


def lh_surge(observations: list[Observation], protocol: Protocol) -> date | None:
    """The day of the first positive LH test among the cycle's observations."""
    days = [o.day for o in observations if o.kind == Kind.LH and lh_positive(o, protocol)]
    return min(days, default=None)


def mucus_peak(observations: list[Observation]) -> date | None:
    """The last peak-type day that a less fertile observation on a later day has confirmed."""
    levels: dict[date, int] = {}
    for obs in observations:
        level = _MUCUS_LEVEL.get(obs.value.word) if obs.kind == Kind.MUCUS else None
        if level is not None:
            levels[obs.day] = max(level, levels.get(obs.day, level))
    candidate: date | None = None
    confirmed: date | None = None
    for day in sorted(levels):
        if levels[day] >= MUCUS_PEAK_LEVEL:
            candidate = day
        elif candidate is not None:
            confirmed, candidate = candidate, None
    return confirmed


def markers(observations: list[Observation], shift: ThermalShift, protocol: Protocol) -> Markers:
    """The cycle's markers and its ovulation estimate by the first method in the order of trust."""
    surge = lh_surge(observations, protocol)
    peak = mucus_peak(observations)
    estimates = {
        "lh": None if surge is None else surge + timedelta(days=protocol.lh_to_ovulation_days),
        "shift": shift.first_high - timedelta(days=1) if shift.confirmed and shift.first_high else None,
        "mucus": peak,
    }
    method = next((m for m in OVULATION_METHODS if estimates[m] is not None), None)
    return Markers(surge, peak, None if method is None else estimates[method], method)


def luteal_length(ovulation: date | None, next_start: date | None) -> int | None:
    """Days from the day after ovulation to the day before the next period (Lenton 1984)."""
    if ovulation is None or next_start is None:
        return None
    days = (next_start - ovulation).days - 1
    return days if days > 0 else None
