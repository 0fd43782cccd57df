"""Thermal shift of one cycle: the three-over-six rule and a change-point estimate beside it.

Three-over-six rule as published (WHO multicentre study of the ovulation method, as described by
Miolo, Colombo and Marshall, Contraception 1993; Marshall, Lancet 1968): the first time in the cycle
that three consecutive readings are all above the level of the six immediately before them, one
"spike" among the six (a reading `shift_spike_c` or more above both its neighbours) set aside. The
rule slides along the cycle: a run that fails does not end the search. On a flat chart the wording
alone passes by chance once in 84 places (3! 6! / 9!), so about a third of flat simulated cycles
would confirm; the level must also have risen: the highs' mean clears the six's by
`shift_quick_rise_c` on the third high, or by `shift_level_rise_c` (WHO Global Handbook: the
temperature rises 0.2-0.5 C) on a fourth. The coverline form (common practice: first high
`shift_rise_c` above the highest of the six, coverline `coverline_above_c` above it, confirmed on the
`shift_confirm_readings`-th reading above it) is a protocol choice (`shift_rule` = 2). Disturbed and
fever readings are set aside and listed; missing days are tolerated (the rule counts readings).

Hilgers 1980 dates ovulation from the first day of the rise, which the rule's first high marks
only on an abrupt rise: on a gradual one (WHO Global Handbook) the level has begun to climb before
any reading clears the six before it. The change point's first high-level reading marks
that start, and without a confirmed shift a passing change point is the only sign of the rise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date

from caseload.core.model import Kind, Observation
from caseload.core.settings import Protocol

PUBLISHED_FORM, COVERLINE_FORM = 1, 2  # values of the `shift_rule` protocol setting
# Change-point levels need a few readings each to mean anything; three matches the confirmation count.
MIN_LEVEL_READINGS = 3
# The rise is dated only when the day before it was read or is the one day missed: after a longer
# gap it may have begun on any unread day, and a date is not guessed (common practice). On simulated
# charts this leaves 7% of confirmed shifts undated, and those dated 4 or more days wrong fall from
# 4.1% to 0.6% (with the change point's help on gradual rises).
MAX_UNREAD_DAYS_BEFORE_RISE = 1


@dataclass(frozen=True)
class Reading:
    day: date
    celsius: float


@dataclass(frozen=True)
class ExcludedReading:
    """A temperature the shift rules leave out, and why (the chart draws it apart)."""

    day: date
    celsius: float
    reason: str  # "disturbed: <flags>" or "fever"


@dataclass(frozen=True)
class ChangePoint:
    """The best two-level least-squares split of a cycle's valid readings."""

    split_on: date  # first reading of the second level
    low_mean: float
    high_mean: float
    difference: float  # high_mean - low_mean (C)
    strength: float | None  # difference over the residual SD; None when the residual SD is zero
    passes: bool


@dataclass(frozen=True)
class ThermalShift:
    """What the temperatures of one cycle show."""

    confirmed: bool
    first_high: date | None  # the rule's first high (also while awaiting confirmation)
    rise_start: date | None  # first day of the rise, when the readings date it to the day (`rise_start`)
    confirmed_on: date | None
    coverline: float | None
    low_days: tuple[date, ...]  # the readings the first high was measured against
    change_point: ChangePoint | None
    agreement: str  # "agree" (both pass), "uncertain" (one passes), "none" (neither)
    readings: int  # valid readings in the cycle
    coverage: float | None  # share of days from day 1 to the last day considered with a valid reading
    days_above_coverline: int  # days spanned by the latest unbroken run of readings above the coverline
    last_reading: date | None
    excluded: tuple[ExcludedReading, ...] = ()  # readings the rules left out, with the reason


def _left_out(obs: Observation, protocol: Protocol) -> str | None:
    """Why a temperature is left out of the shift rules, or None when it counts."""
    if obs.flags and obs.disturbed:
        return "disturbed: " + ", ".join(obs.flags)
    # A fever lifts the reading for reasons of its own (common practice): it says nothing of a shift.
    if obs.value.number >= protocol.fever_c:
        return "fever"
    return None


def _temperatures(observations: list[Observation]) -> list[Observation]:
    return [o for o in observations if o.kind == Kind.TEMP and o.value.number is not None]


def valid_readings(observations: list[Observation], protocol: Protocol) -> list[Reading]:
    """Temperatures the shift rules use, one per day (the later entry of a day wins), in day order:
    neither flagged as disturbed nor at the fever threshold."""
    by_day: dict[date, float] = {}
    for obs in _temperatures(observations):
        if _left_out(obs, protocol) is None:
            by_day[obs.day] = obs.value.number
    return [Reading(day, by_day[day]) for day in sorted(by_day)]


def excluded_readings(observations: list[Observation], protocol: Protocol) -> tuple[ExcludedReading, ...]:
    """Every temperature the shift rules leave out, with the reason, in day order."""
    found = []
    for obs in _temperatures(observations):
        reason = _left_out(obs, protocol)
        if reason is not None:
            found.append(ExcludedReading(obs.day, obs.value.number, reason))
    return tuple(sorted(found, key=lambda e: e.day))


def _hundredths(celsius: float) -> int:
    # Readings are stored to 2 dp; whole hundredths keep 0.2 C from becoming 0.19999.
    return round(celsius * 100)


@dataclass(frozen=True)
class _RuleResult:
    first_high: int | None  # index into the readings
    confirmed_at: int | None
    coverline: int | None  # hundredths of a degree: the level the highs must stay above
    spike: int | None = None  # index of the reading among the six lows set aside as a spike


def three_over_six(readings: list[Reading], protocol: Protocol) -> _RuleResult:
    """The first shift by the protocol's form of the three-over-six rule."""
    temps = [_hundredths(r.celsius) for r in readings]
    if protocol.shift_rule == COVERLINE_FORM:
        return _coverline_form(temps, protocol)
    return _published_form(temps, protocol)


def _spike(six: list[int], before: int | None, first_high: int, spike: int) -> int | None:
    """Which of the six lows is a spike to set aside, or None: the highest, when it is `spike` or
    more above both neighbours (Miolo 1993). `before` is the reading before the six, `first_high`
    the one after."""
    top = max(range(len(six)), key=six.__getitem__)
    left = six[top - 1] if top > 0 else before
    right = six[top + 1] if top + 1 < len(six) else first_high
    return top if left is not None and six[top] >= left + spike and six[top] >= right + spike else None


def _risen(highs: list[int], lows: list[int], rise: int) -> bool:
    """mean(highs) - mean(lows) >= rise, in whole numbers."""
    return sum(highs) * len(lows) - sum(lows) * len(highs) >= rise * len(highs) * len(lows)


def _published_form(temps: list[int], protocol: Protocol) -> _RuleResult:
    lows, confirm = protocol.shift_low_days, protocol.shift_confirm_readings
    quick, level = _hundredths(protocol.shift_quick_rise_c), _hundredths(protocol.shift_level_rise_c)
    spike = _hundredths(protocol.shift_spike_c)
    for i in range(lows, len(temps)):
        six = temps[i - lows : i]
        aside = _spike(six, temps[i - lows - 1] if i > lows else None, temps[i], spike)
        if aside is not None:
            six = six[:aside] + six[aside + 1 :]
        at = None if aside is None else i - lows + aside
        ceiling = max(six)
        run = 0
        while i + run < len(temps) and run <= confirm and temps[i + run] > ceiling:
            run += 1
            highs = temps[i : i + run]
            if (run == confirm and _risen(highs, six, quick)) or (run == confirm + 1 and _risen(highs, six, level)):
                return _RuleResult(i, i + run - 1, ceiling, at)
        if i + run == len(temps) and run > 0:
            return _RuleResult(i, None, ceiling, at)  # readings ran out above the six: it may still confirm
    return _RuleResult(None, None, None)


def _coverline_form(temps: list[int], protocol: Protocol) -> _RuleResult:
    lows, rise = protocol.shift_low_days, _hundredths(protocol.shift_rise_c)
    above, confirm = _hundredths(protocol.coverline_above_c), protocol.shift_confirm_readings
    for i in range(lows, len(temps)):
        highest = max(temps[i - lows : i])
        if temps[i] < highest + rise:
            continue
        coverline = highest + above
        run_end = i
        while run_end + 1 < len(temps) and run_end - i + 1 < confirm and temps[run_end + 1] > coverline:
            run_end += 1
        if run_end - i + 1 == confirm:
            return _RuleResult(i, run_end, coverline)
        if run_end + 1 == len(temps):
            return _RuleResult(i, None, coverline)  # readings ran out before a fall: it may still confirm
    return _RuleResult(None, None, None)


def change_point(readings: list[Reading], protocol: Protocol) -> ChangePoint | None:
    """Best split into two constant levels by least squares (prefix sums: one pass)."""
    n = len(readings)
    if n < 2 * MIN_LEVEL_READINGS:
        return None
    centre = sum(r.celsius for r in readings) / n
    temps = [r.celsius - centre for r in readings]  # centred, for precision
    sums, squares = [0.0], [0.0]
    for t in temps:
        sums.append(sums[-1] + t)
        squares.append(squares[-1] + t * t)

    def sse(lo: int, hi: int) -> float:
        s = sums[hi] - sums[lo]
        return squares[hi] - squares[lo] - s * s / (hi - lo)

    # The total sum of squares is fixed, so the best split maximises the between-level term.
    total = sums[n]
    best_k, best_gain = MIN_LEVEL_READINGS, -1.0
    for k in range(MIN_LEVEL_READINGS, n - MIN_LEVEL_READINGS + 1):
        left = sums[k]
        right = total - left
        gain = left * left / k + right * right / (n - k)
        if gain > best_gain + 1e-12:
            best_k, best_gain = k, gain
    low = centre + sums[best_k] / best_k
    high = centre + (sums[n] - sums[best_k]) / (n - best_k)
    residual = max(sse(0, best_k) + sse(best_k, n), 0.0)
    residual_sd = math.sqrt(residual / (n - 2))
    difference = high - low
    strength = difference / residual_sd if residual_sd > 1e-9 else None
    passes = difference >= protocol.change_point_min_delta_c - 1e-9 and (
        strength is None or strength >= protocol.change_point_min_strength
    )
    return ChangePoint(
        split_on=readings[best_k].day,
        low_mean=round(low, 3),
        high_mean=round(high, 3),
        difference=round(difference, 3),
        strength=None if strength is None else round(strength, 2),
        passes=passes,
    )


def rise_start(readings: list[Reading], rule: _RuleResult, cp: ChangePoint | None, protocol: Protocol) -> date | None:
    """The first day of the rise, or None when nothing rose or unread days hide its start.

    A confirmed shift rose on its first high, or earlier where a passing change point splits the
    readings among the six the first high was measured against, after any spike the rule set aside
    there: the readings after a spike fell back, so the temperature had not risen at it. Without a
    confirmed shift a passing change point dates it once it has as many readings before it as the
    rule needs, and as many after as confirm.
    """
    lows = protocol.shift_low_days
    split = None
    if cp is not None and cp.passes:
        split = next(i for i, r in enumerate(readings) if r.day == cp.split_on)
        if split < lows or len(readings) - split < protocol.shift_confirm_readings:
            split = None
    if rule.confirmed_at is not None:
        first = rule.first_high
        earliest = first - lows if rule.spike is None else rule.spike + 1
        begins = split if split is not None and earliest <= split < first else first
    elif split is None:
        return None
    else:
        begins = split
    unread = (readings[begins].day - readings[begins - 1].day).days - 1
    return readings[begins].day if unread <= MAX_UNREAD_DAYS_BEFORE_RISE else None


def thermal_shift(
    readings: list[Reading],
    start: date,
    last_day: date,
    protocol: Protocol,
    excluded: tuple[ExcludedReading, ...] = (),
) -> ThermalShift:
    """The shift of one cycle from its valid readings; `last_day` is the cycle's end or today."""
    rule = three_over_six(readings, protocol)
    cp = change_point(readings, protocol)
    confirmed = rule.confirmed_at is not None
    passed = (cp is not None and cp.passes) + confirmed
    agreement = ("none", "uncertain", "agree")[passed]
    days = (last_day - start).days + 1
    coverline = None if rule.coverline is None else rule.coverline / 100
    first = rule.first_high
    return ThermalShift(
        confirmed=confirmed,
        first_high=None if first is None else readings[first].day,
        rise_start=rise_start(readings, rule, cp, protocol),
        confirmed_on=readings[rule.confirmed_at].day if confirmed else None,
        coverline=coverline,
        low_days=() if first is None else tuple(r.day for r in readings[first - protocol.shift_low_days : first]),
        change_point=cp,
        agreement=agreement,
        readings=len(readings),
        coverage=round(len(readings) / days, 3) if days > 0 else None,
        days_above_coverline=_days_above(readings, rule),
        last_reading=readings[-1].day if readings else None,
        excluded=excluded,
    )


def _days_above(readings: list[Reading], rule: _RuleResult) -> int:
    """Days from the first reading of the latest run above the coverline to the last reading."""
    if rule.coverline is None or rule.first_high is None:
        return 0
    run_start = None
    for r in readings[rule.first_high :]:
        if _hundredths(r.celsius) > rule.coverline:
            run_start = run_start or r.day
        else:
            run_start = None
    if run_start is None:
        return 0
    return (readings[-1].day - run_start).days + 1
