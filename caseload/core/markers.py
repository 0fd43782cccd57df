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
# it to a range of days (Hilgers 1980); a change point without a confirmed shift is the same
# measurement read with less certainty; the mucus peak is a self-observation and the least exact.
# On simulated charts (300 patients, a year) the ovulatory cycles each method dated were within
# 1 / 2 days of the true day in: lh 1.00 / 1.00 (all markers charted), shift 0.90 / 0.97,
# change-point 0.79 / 0.90 (temperatures only).
# The simulator puts the last peak-type mucus on the true day by construction (1.00 where it and
# a change point are both charted), so its mucus figure says nothing of real charts.
OVULATION_METHODS: tuple[str, ...] = ("lh", "shift", "change-point", "mucus")


# Hilgers 1980: ovulation lies from 6 days before to 3 days after the first day of the rise.
RISE_BEFORE_DAYS = 6
RISE_AFTER_DAYS = 3
# Positive tests more than this many days apart are separate surges (a surge lasts about two days,
# from memory); a negative test between two positives also separates them.
SURGE_GAP_DAYS = 3


@dataclass(frozen=True)
class Markers:
    lh_surge: date | None  # first positive LH test of the surge that dates ovulation
    mucus_peak: date | None  # last peak-type mucus day followed by a less fertile day
    ovulation: date | None
    ovulation_method: str | None  # one of OVULATION_METHODS
    conflict: str | None = None  # a marker left out because the other evidence contradicts it


def lh_positive(obs: Observation, protocol: Protocol) -> bool:
    if obs.value.word is not None:
        return obs.value.word == POSITIVE
    return obs.value.number is not None and obs.value.number >= protocol.lh_positive_iu_l


def lh_surges(observations: list[Observation], protocol: Protocol) -> list[date]:
    """The first positive test of each surge in the cycle, in day order."""
    tested: dict[date, bool] = {}
    for obs in observations:
        if obs.kind == Kind.LH:
            tested[obs.day] = tested.get(obs.day, False) or lh_positive(obs, protocol)
    starts, previous = [], None
    for day in sorted(tested):
        positive = tested[day]
        if positive and (previous is None or not tested[previous] or (day - previous).days > SURGE_GAP_DAYS):
            starts.append(day)
        previous = day
    return starts


def _fits_the_rise(surge: date, shift: ThermalShift, protocol: Protocol) -> bool:
    """Whether ovulation dated by this surge can lie where the temperatures put it: from 6 days
    before to 3 days after the first day of a dated rise (Hilgers 1980). After a rise only the
    change point sees, any later surge is kept: that rise may be noise, and the LH surge is the more
    exact marker (WHO Task Force 1980); a confirmed shift is not noise."""
    if shift.rise_start is None:
        return True
    after = (surge + timedelta(days=protocol.lh_to_ovulation_days) - shift.rise_start).days
    return -RISE_BEFORE_DAYS <= after and (after <= RISE_AFTER_DAYS or not shift.confirmed)


def _from_the_rise(days: list[date], rise: date) -> str:
    return ", ".join(f"{(rise - d).days} days before" if d < rise else f"{(d - rise).days} days after" for d in days)


def dating_surge(
    observations: list[Observation], shift: ThermalShift, protocol: Protocol
) -> tuple[date | None, str | None]:
    """(the surge that dates ovulation, why a logged surge was left out).

    The first positive test does not always win: an early positive may be a surge that did not
    lead to ovulation. The latest surge consistent with the temperatures dates it; when none is,
    the temperatures do, and the nurse is told.
    """
    surges = lh_surges(observations, protocol)
    fitting = [s for s in surges if _fits_the_rise(s, shift, protocol)]
    left = [s for s in surges if s not in fitting]
    if not left:
        return (fitting[-1] if fitting else None), None
    note = (
        f"LH positive {_from_the_rise(left, shift.rise_start)} the temperature rise, too far from it for the "
        "ovulation behind it (Hilgers 1980: from 6 days before to 3 days after the rise): not used to date "
        "ovulation, a dating conflict to review"
    )
    return (fitting[-1] if fitting else None), note


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


def markers(
    observations: list[Observation], shift: ThermalShift, protocol: Protocol, retrospective: bool = False
) -> Markers:
    """The cycle's markers and its ovulation estimate by the first method in the order of trust.

    A thermal shift dates ovulation to the day before the first day of the rise, its last low day.
    The LH surge falls within a day of the temperature nadir (Morris 1976) and ovulation about a day
    after the surge (WHO Task Force 1980), so no source puts it earlier. On simulated charts with a
    confirmed shift that day is exact in 58% of cycles and within a day in 90%. A change point without a
    confirmed shift dates ovulation the same way, but only `retrospective`ly, for a completed
    cycle, where no later reading can move its split.
    """
    surge, conflict = dating_surge(observations, shift, protocol)
    peak = mucus_peak(observations)
    before_rise = None if shift.rise_start is None else shift.rise_start - timedelta(days=1)
    estimates = {
        "lh": None if surge is None else surge + timedelta(days=protocol.lh_to_ovulation_days),
        "shift": before_rise if shift.confirmed else None,
        "change-point": before_rise if retrospective and not shift.confirmed else None,
        "mucus": peak,
    }
    method = next((m for m in OVULATION_METHODS if estimates[m] is not None), None)
    return Markers(surge, peak, None if method is None else estimates[method], method, conflict)


def dating_conflict(luteal: int | None, found: Markers, protocol: Protocol) -> str | None:
    """Why a measured luteal length is not believed, or None: outside the plausible range it says
    the ovulation dating is wrong, not that the phase was so (ASRM 2021: typical 11-17 days)."""
    if luteal is None or protocol.luteal_conflict_below <= luteal <= protocol.luteal_conflict_above:
        return None
    return (
        f"luteal phase of {luteal} days by {found.ovulation_method} dating is outside "
        f"{protocol.luteal_conflict_below}-{protocol.luteal_conflict_above} days (ASRM 2021: typical 11-17): "
        "a dating conflict, not learnt"
    )


# The ovum lives 12-24 hours (common practice): an LH-dated fertile time ends the day after ovulation.
OVUM_DAYS = 1
# Mucus observation: the fertile time lasts to the end of the third day after the peak (common practice).
DAYS_AFTER_MUCUS_PEAK = 3


def fertile_until(found: Markers, protocol: Protocol) -> date | None:
    """The last fertile day the cycle's markers show, or None without an LH surge or mucus peak."""
    ends = []
    if found.lh_surge is not None:
        ends.append(found.lh_surge + timedelta(days=protocol.lh_to_ovulation_days + OVUM_DAYS))
    if found.mucus_peak is not None:
        ends.append(found.mucus_peak + timedelta(days=DAYS_AFTER_MUCUS_PEAK))
    return max(ends, default=None)


def days_after_ovulation(ovulation: date | None, next_start: date | None) -> int | None:
    """Days from the day after the estimated ovulation day to the day before the next period:
    the luteal length as the prediction's model counts it."""
    if ovulation is None or next_start is None:
        return None
    days = (next_start - ovulation).days - 1
    return days if days > 0 else None


def luteal_length(found: Markers, next_start: date | None) -> int | None:
    """Days from the luteal phase's first day to the day before the next period (Lenton 1984).

    The phase begins the day after the event that dated ovulation: the day after the LH peak
    when the surge dated it, as Lenton 1984 counted (with ovulation dated to the day after the
    surge, that is the ovulation day itself), else the day after the estimated ovulation day.
    """
    dated_by = found.lh_surge if found.ovulation_method == "lh" else found.ovulation
    return None if found.ovulation is None else days_after_ovulation(dated_by, next_start)
