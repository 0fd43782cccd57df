"""Prediction for the current cycle as a probability distribution over the ovulation cycle day.

Cycle length L and luteal length T (days from the day after ovulation to the day before the next
period, Lenton 1984) each come from a hierarchical normal model: her mean is drawn from the
population (cycle: Fehring 2006; luteal: Lenton 1984) and her values scatter around it with her
own spread. The population's SD splits into a between-women part and a usual within-woman part,
so the prior on her mean weighs as many cycles as her within-woman variance is a multiple of the
between-women variance: a consistent history (small spread) is hardly pulled toward the population
mean, a scattered one more. Her spread is learnt from her values against the usual spread, which
carries `prior_weight_cycles` cycles' worth of weight; with it learnt the predictive is Student's t.
Ovulation falls on cycle day O = L - T and the next period on day L + 1, never before
`earliest_ovulation_day`. A small share of cycles ovulate at any day up to
`late_ovulation_last_day` whatever the pattern (Wilcox 2000: the window comes late sporadically,
4-6% potentially fertile in the fifth week, even in regular women), so the daily curve keeps a
tail. The current cycle's evidence then reweights the joint grid; ovulation and the next period
always come from the same grid, so the next period stays ovulation plus the luteal length.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta
from functools import lru_cache
from operator import mul
from types import MappingProxyType

from caseload.core.distributions import day_masses
from caseload.core.settings import Protocol

# Hilgers 1980: ovulation lies from 6 days before to 3 days after the first day of the rise;
# a confirmed shift the readings do not date to the day means ovulation is past, so only the days
# before the first high are kept.
SHIFT_OVULATION_EARLIEST = 6
# A rise only the change point sees is weaker evidence: the whole of Hilgers' range is kept.
RISE_OVULATION_LATEST = 3
# A positive LH test dates ovulation to `lh_to_ovulation_days` later, give or take a day
# (WHO Task Force 1980: 90% ovulated 16 to 48 h after the rise). Weights: common practice.
# A confirmed shift dated to the day dates it to the day before the rise, the cycle record's day
# (see markers), as closely: within a day in 90% of simulated cycles.
DATED_LIKELIHOOD = {-1: 0.25, 0: 0.5, 1: 0.25}
# Whole days are the record's resolution; a narrower spread would claim more than it knows.
MIN_SCALE_DAYS = 0.5
# The Ogino-Knaus rule is recomputed from the six most recent cycles (WHO Global Handbook).
CALENDAR_RULE_CYCLES = 6
OVULATION_RANGE = (0.10, 0.90)
PERIOD_RANGE = (0.05, 0.95)
DAILY_DAYS = 14
# Patterns kept in memory, one per set of completed cycles: a long-running interface recomputes
# the recently saved patients' forecasts on every save. Each holds a few hundred numbers (the
# grid's factors, about 13 kB), so the most recent few dozen stay under half a MB.
PATTERN_CACHE_SIZE = 32


@dataclass(frozen=True)
class Predictive:
    """Posterior predictive of a length in days: Student's t (centre, scale, degrees of freedom)."""

    centre: float
    scale: float
    dof: float
    observed: int  # how many of the patient's own values went in


@dataclass(frozen=True)
class Evidence:
    """What the current cycle shows about its ovulation, in cycle days."""

    cycle_day: int  # today
    first_high: int | None  # of a confirmed thermal shift
    lh_surge: int | None
    horizon: int | None  # earliest day ovulation can still be on by the temperatures; None when not watched
    rise_start: int | None = None  # first day of a rise the change point sees without a confirmed shift
    lh_negatives: tuple[int, ...] = ()  # days of negative LH tests, in order
    shift_rise: int | None = None  # first day of the confirmed shift's rise, when the readings date it

    @property
    def dates_ovulation(self) -> bool:
        """Whether this cycle's own markers date ovulation to within a day (an LH surge, or a
        confirmed shift dated to the day): then they alone date it, as the cycle record does."""
        return self.lh_surge is not None or self.shift_rise is not None


# A surge lasts about two days (from memory): negative tests at most this many days apart leave
# no day of it untested, so they form one run.
MAX_LH_TEST_GAP_DAYS = 2


def watch_horizon(reading_days: list[int], protocol: Protocol) -> int | None:
    """The earliest cycle day ovulation can still be on when the temperatures show no sign of it:
    ovulation before the last `shift_confirm_readings` readings would have given a confirmed shift
    by now, provided there were enough readings for the rule to work at all."""
    confirm = protocol.shift_confirm_readings
    if len(reading_days) >= protocol.shift_low_days + confirm:
        return reading_days[-confirm]
    return None


def lh_horizon(negatives: tuple[int, ...], expected: tuple[int, int], protocol: Protocol) -> int | None:
    """The earliest cycle day ovulation can still be on after negative LH tests, or None.

    A negative test says only that the surge was not on that day. A run of negatives with no day
    of a surge untested, begun before the earliest expected surge, says the surge is not yet past;
    a lone negative, or a run begun after ovulation may already have happened, says nothing. Tests
    after the expected ovulation range say nothing of ovulation earlier in it.
    """
    first_surge = expected[0] - protocol.lh_to_ovulation_days
    run: list[int] = []
    for day in sorted(set(negatives)):
        if day > expected[1]:
            break
        if run and day - run[-1] > MAX_LH_TEST_GAP_DAYS:
            if run[0] <= first_surge:
                break  # the run that covered the expected surge ended; later ones start too late
            run = []
        run.append(day)
    if not run or run[0] > first_surge:
        return None
    return run[-1] + protocol.lh_to_ovulation_days


@dataclass(frozen=True)
class DayChance:
    day: date
    p_fertile: float


@dataclass(frozen=True)
class Prediction:
    """The current cycle's forecast; ovulation fields are None when the evidence leaves the model no room."""

    ovulation: date | None  # most likely day, given all of this cycle's evidence
    ovulation_range: tuple[date, date] | None  # 80%
    fertile_window: tuple[date, date] | None  # six days ending on `ovulation` (Wilcox 1995)
    daily: tuple[DayChance, ...]  # P(fertile) today and the 13 days after
    ovulation_distribution: tuple[tuple[date, float], ...]
    next_period: date  # most likely, from the pattern and any LH or shift evidence (not moved by lateness)
    next_period_range: tuple[date, date]  # 90%
    expected_ovulation: date  # from the pattern alone, before this cycle's evidence
    expected_ovulation_range: tuple[date, date]  # 80%, pattern alone
    calendar_rule: tuple[int, int] | None  # Ogino-Knaus, in cycle days
    evidence: str  # "lh", "shift", "change-point", joined by "+"; "elapsed" (watched days, no sign); "pattern"
    cycle_length: Predictive
    luteal_length: Predictive
    reason: str = ""  # in words: what the forecast rests on and why it moved from the pattern
    peak_p_fertile: float = 0.0  # the highest P(fertile) of any cycle day by her pattern alone


def predictive(
    values: list[int], prior_mean: float, prior_sd: float, within_sd: float, prior_weight: float
) -> Predictive:
    """Hierarchical normal model: her mean from N(prior_mean, between^2), where between^2 =
    prior_sd^2 - within_sd^2, her values from N(her mean, her variance); her variance is her own
    spread pooled with `within_sd` carrying `prior_weight` values' worth. With no values the
    population stands alone."""
    n = len(values)
    if not n:
        return Predictive(prior_mean, max(prior_sd, MIN_SCALE_DAYS), max(prior_weight, 1.0), 0)
    between_var = max(prior_sd**2 - within_sd**2, MIN_SCALE_DAYS**2)
    mean = sum(values) / n
    spread = sum((v - mean) ** 2 for v in values)
    dof = max(prior_weight + n - 1, 1.0)
    within_var = (prior_weight * within_sd**2 + spread) / dof
    prior_cycles = within_var / between_var  # the weight of the population mean, in her cycles
    centre = (prior_cycles * prior_mean + n * mean) / (prior_cycles + n)
    scale = max(math.sqrt(within_var * (1 + 1 / (prior_cycles + n))), MIN_SCALE_DAYS)
    return Predictive(round(centre, 4), round(scale, 4), dof, n)


def cycle_predictive(lengths: list[int], protocol: Protocol) -> Predictive:
    p = protocol
    return predictive(lengths, p.prior_cycle_mean, p.prior_cycle_sd, p.prior_cycle_within_sd, p.prior_weight_cycles)


def luteal_predictive(luteals: list[int], protocol: Protocol) -> Predictive:
    p = protocol
    return predictive(luteals, p.prior_luteal_mean, p.prior_luteal_sd, p.prior_luteal_within_sd, p.prior_weight_cycles)


def calendar_rule(lengths: list[int], protocol: Protocol) -> tuple[int, int] | None:
    """Ogino-Knaus: first fertile day = shortest - 18, last = longest - 11 (WHO Global Handbook)."""
    if len(lengths) < protocol.calendar_rule_min_cycles:
        return None
    recent = lengths[-CALENDAR_RULE_CYCLES:]
    return max(min(recent) - 18, 1), max(max(recent) - 11, 1)


def _quantile(days: Sequence[int], masses: Sequence[float], p: float) -> int:
    total = 0.0
    for day, mass in zip(days, masses):
        total += mass
        if total >= p - 1e-12:
            return day
    return days[-1]


@dataclass(frozen=True)
class Grid:
    """P(O = o, N = n) on whole cycle days, held in factors rather than cell by cell. Ovulation on
    day o with a luteal phase of `t_first + j` days puts the next period on day n = o + t_first + j + 1,
    and that cell weighs

        weights[o] * t_masses[j] * (pattern * l_masses[n - 1 - l_first] + flat):

    the cycle length's and the luteal length's own masses for the pattern, plus a flat share for a
    sporadic ovulation. Evidence and watched days reweight ovulation days only, so each margin is a
    row or a diagonal of products, summed in C. Read-only: the pattern's grid is shared."""

    weights: Mapping[int, float]  # ovulation day -> its weight, days ascending; a day not here has none
    row_mass: Mapping[int, float]  # ovulation day -> the total of its row's cells
    t_first: int
    t_masses: tuple[float, ...]
    l_first: int
    l_masses: tuple[float, ...]
    pattern: float
    flat: float

    def __bool__(self) -> bool:
        return bool(self.weights)

    def reweighted(self, factors: Mapping[int, float]) -> Grid:
        """The grid over the days `factors` gives a positive factor, each day's weight times it;
        empty when nothing is left."""
        weights = {o: w * factors[o] for o, w in self.weights.items() if factors.get(o, 0.0) > 0.0}
        mass = {o: self.row_mass[o] * factors[o] for o in weights}
        if math.fsum(mass.values()) <= 0.0:
            weights = mass = {}
        return replace(self, weights=weights, row_mass=mass)


def _ovulation_margin(grid: Grid) -> tuple[list[int], list[float]]:
    total = math.fsum(grid.row_mass.values())
    return list(grid.row_mass), [m / total for m in grid.row_mass.values()]


def _period_margin(grid: Grid) -> tuple[list[int], list[float]]:
    """P(N = n): each day n takes a diagonal of the grid, the weights of the ovulation days
    convolved with the luteal masses, times the cycle length's factor."""
    first_o, last_o = min(grid.weights), max(grid.weights)
    weights = [grid.weights.get(o, 0.0) for o in range(first_o, last_o + 1)]
    backwards = grid.t_masses[::-1]
    first = first_o + grid.t_first + 1
    sums = []
    for k in range(len(weights) + len(backwards) - 1):  # day n = first + k; ovulation index i, luteal k - i
        lo, hi = max(k - len(backwards) + 1, 0), min(k, len(weights) - 1) + 1
        at = len(backwards) - 1 - k
        length = first + k - 1 - grid.l_first  # the cycle length n - 1 in l_masses
        cycle = grid.l_masses[length] if 0 <= length < len(grid.l_masses) else 0.0
        sums.append(sum(map(mul, weights[lo:hi], backwards[at + lo : at + hi])) * (grid.pattern * cycle + grid.flat))
    total = math.fsum(sums)
    return list(range(first, first + len(sums))), [s / total for s in sums]


def _summary(
    days: Sequence[int], probs: Sequence[float], bounds: tuple[float, float], on: Callable[[int], date]
) -> tuple[date, tuple[date, date]]:
    """(most likely date, (lower, upper) dates) of one margin of the grid. On a flat stretch (days
    watched with no sign of ovulation, then a long tail) the most likely day is merely the first of
    many nearly as likely, and can fall outside the range itself: the median stands for it then."""
    lower, upper = _quantile(days, probs, bounds[0]), _quantile(days, probs, bounds[1])
    best = days[max(range(len(probs)), key=probs.__getitem__)]
    if not lower <= best <= upper:
        best = _quantile(days, probs, 0.5)
    return on(best), (on(lower), on(upper))


def _evidence_likelihoods(evidence: Evidence, protocol: Protocol) -> list[tuple[str, dict[int, float]]]:
    """Likelihoods of the ovulation day from this cycle's evidence, most trusted first."""
    found = []
    if evidence.lh_surge is not None:
        found.append(("lh", _around(evidence.lh_surge + protocol.lh_to_ovulation_days)))
    if evidence.shift_rise is not None:
        found.append(("shift", _around(evidence.shift_rise - 1)))
    elif evidence.first_high is not None:
        f = evidence.first_high
        found.append(("shift", {o: 1.0 for o in range(max(f - SHIFT_OVULATION_EARLIEST, 1), f)}))
    if evidence.rise_start is not None:
        r = evidence.rise_start
        rise = range(max(r - SHIFT_OVULATION_EARLIEST, 1), r + RISE_OVULATION_LATEST + 1)
        found.append(("change-point", {o: 1.0 for o in rise}))
    return found


def _around(day: int) -> dict[int, float]:
    return {day + k: w for k, w in DATED_LIKELIHOOD.items() if day + k >= 1}


def _combined(found: list[tuple[str, dict[int, float]]]) -> dict[int, float]:
    days = set.intersection(*(set(lk) for _, lk in found))
    return {o: math.prod(lk[o] for _, lk in found) for o in days}


@dataclass(frozen=True)
class Pattern:
    """What the forecast takes from the completed cycles alone, before this cycle's evidence."""

    grid: Grid
    ovulation: tuple[tuple[int, ...], tuple[float, ...]]  # the grid's ovulation margin: days, probabilities
    peak_p_fertile: float


def pattern_of(cycle: Predictive, luteal: Predictive, protocol: Protocol) -> Pattern:
    """The pattern for these predictives under `protocol`, computed once per distinct input."""
    p = protocol
    return _pattern(
        cycle, luteal, p.earliest_ovulation_day, p.late_ovulation_share, p.late_ovulation_last_day,
        p.fertile_window_days,
    )


@lru_cache(maxsize=PATTERN_CACHE_SIZE)
def _pattern(
    cycle: Predictive, luteal: Predictive, earliest: int, late_share: float, late_last_day: int, width: int
) -> Pattern:
    grid = _joint(cycle, luteal, earliest, late_share, late_last_day)
    days, probs = _ovulation_margin(grid)
    return Pattern(grid, (tuple(days), tuple(probs)), _peak((days, probs), width))


def _joint(cycle: Predictive, luteal: Predictive, earliest: int, late_share: float, late_last_day: int) -> Grid:
    """The pattern's grid: a cycle of length L with a luteal phase of T days ovulates on day
    L - T, each (L, T) pair its own cell; and, with `late_share` (`late_ovulation_share`), a
    sporadic ovulation on any day up to `late_last_day`. Never before `earliest`
    (`earliest_ovulation_day`)."""
    l_first, l_masses = day_masses(cycle.centre, cycle.scale, cycle.dof, 2)
    t_first, t_masses = day_masses(luteal.centre, luteal.scale, luteal.dof, 1)

    def pattern(o: int) -> float:  # the pattern's total weight of ovulating on day o
        at = o + t_first - l_first  # l_masses[at + j]: the cycle length of luteal index j
        lo, hi = min(max(-at, 0), len(t_masses)), max(min(len(l_masses) - at, len(t_masses)), 0)
        return sum(map(mul, l_masses[at + lo : at + hi], t_masses[lo:hi]))

    # The latest ovulation day the pattern gives any weight: the longest cycle with the shortest luteal phase.
    l_last = max((length for length, pl in enumerate(l_masses, l_first) if pl > 0.0), default=0)
    t_least = next((t for t, pt in enumerate(t_masses, t_first) if pt > 0.0), l_last)
    last = l_last - t_least if l_last - t_least >= earliest else 0
    days = range(earliest, max(late_last_day, last) + 1)
    rows = [pattern(o) for o in days]
    total = math.fsum(rows)
    share = late_share if total > 0.0 else 1.0
    scale = (1.0 - share) / total if total > 0.0 else 0.0
    flat = share / len(days)
    luteal_total = math.fsum(t_masses)
    return Grid(
        weights=MappingProxyType(dict.fromkeys(days, 1.0)),
        row_mass=MappingProxyType({o: scale * r + flat * luteal_total for o, r in zip(days, rows)}),
        t_first=t_first, t_masses=t_masses, l_first=l_first, l_masses=l_masses, pattern=scale, flat=flat,
    )  # fmt: skip


def _from(grid: Grid, horizon: int | None) -> Grid:
    """The grid with ovulation before `horizon` struck out; empty when nothing is left."""
    return grid.reweighted({o: 1.0 for o in grid.weights if horizon is None or o >= horizon})


def predict(
    start: date,
    evidence: Evidence,
    cycle: Predictive,
    luteal: Predictive,
    complete_lengths: list[int],
    today: date,
    protocol: Protocol,
) -> Prediction:
    """Forecast the cycle that began on `start`."""

    def on(cycle_day: int) -> date:
        return start + timedelta(days=cycle_day - 1)

    def day_of(day: date) -> int:
        return (day - start).days + 1

    known = pattern_of(cycle, luteal, protocol)
    expected, expected_range = _summary(*known.ovulation, OVULATION_RANGE, on)
    expected_days = (day_of(expected_range[0]), day_of(expected_range[1]))
    found = _evidence_likelihoods(evidence, protocol)
    if not found:
        watched = [h for h in (evidence.horizon, lh_horizon(evidence.lh_negatives, expected_days, protocol)) if h]
        horizon = max(watched, default=None)
        label = "pattern" if horizon is None else "elapsed"
        # Days watched with no sign of ovulation are struck out; the next period moves with it.
        current = _from(known.grid, horizon)
        informed = current or known.grid
    else:
        horizon = None
        label = "+".join(name for name, _ in found)
        if evidence.dates_ovulation:
            # Dated to within a day, the cycle's own markers alone date it: the history, weighed in,
            # would pull a late ovulation back towards her usual day (and the period with it).
            informed = _evidence_only(_combined(found) or found[0][1], luteal)
        else:
            # When the history and a looser sign disagree, the sign wins alone.
            informed = (
                known.grid.reweighted(_combined(found))
                or known.grid.reweighted(found[0][1])
                or _evidence_only(found[0][1], luteal)
            )
        current = informed

    next_period, period_range = _summary(*_period_margin(informed), PERIOD_RANGE, on)
    ovulation = ov_range = window = None
    daily: tuple[DayChance, ...] = ()
    distribution: tuple[tuple[date, float], ...] = ()
    if current:
        days, probs = _ovulation_margin(current)
        ovulation, ov_range = _summary(days, probs, OVULATION_RANGE, on)
        width = protocol.fertile_window_days
        window = (max(ovulation - timedelta(days=width - 1), start), ovulation)
        distribution = tuple((on(d), round(p, 6)) for d, p in zip(days, probs))
        by_day = dict(zip(days, probs))
        daily = _daily(by_day, evidence.cycle_day, today, width)
        # The most likely day of each margin may disagree; the outlook keeps them one luteal phase apart.
        next_period = ovulation + timedelta(days=round(luteal.centre) + 1)
    return Prediction(
        ovulation=ovulation,
        ovulation_range=ov_range,
        fertile_window=window,
        daily=daily,
        ovulation_distribution=distribution,
        next_period=next_period,
        next_period_range=period_range,
        expected_ovulation=expected,
        expected_ovulation_range=expected_range,
        calendar_rule=calendar_rule(complete_lengths, protocol),
        evidence=label,
        cycle_length=cycle,
        luteal_length=luteal,
        peak_p_fertile=known.peak_p_fertile,
        reason=_reason(
            label, evidence, horizon, cycle, day_of(expected), None if ovulation is None else day_of(ovulation),
            day_of(next_period),
        ),
    )


def _reason(
    label: str,
    evidence: Evidence,
    horizon: int | None,
    cycle: Predictive,
    expected: int,
    ovulation: int | None,
    next_period: int,
) -> str:
    """What the forecast rests on, and why it moved from the pattern, in words (cycle days, so the
    words stay true whatever the calendar)."""
    history = (
        f"her {cycle.observed} cycles (about {cycle.centre:.0f} days) and the population prior (Fehring 2006)"
        if cycle.observed
        else "the population prior alone (Fehring 2006), no complete cycle yet"
    )
    then = f"next period on cycle day {next_period}"
    if label == "pattern":
        return f"From {history}: ovulation expected around cycle day {expected}; {then}, a luteal phase later."
    if label == "elapsed":
        if ovulation is None:
            return f"Not yet: no sign of ovulation by cycle day {evidence.cycle_day}, past every day the model allows."
        moved = "" if ovulation == expected else f" (the pattern alone said cycle day {expected})"
        return (
            f"Not yet: the temperatures and LH tests up to cycle day {evidence.cycle_day} show no sign of "
            f"ovulation, so it is put on cycle day {horizon} or later, most likely cycle day {ovulation}{moved}; "
            f"the next period moves with it: {then}."
        )
    signs = []
    if evidence.lh_surge is not None:
        signs.append(f"LH surge on cycle day {evidence.lh_surge} (ovulation about a day later, WHO Task Force 1980)")
    if evidence.first_high is not None:
        signs.append(f"thermal shift confirmed, first high on cycle day {evidence.first_high}: ovulation has passed")
    if evidence.rise_start is not None:
        signs.append(f"a temperature rise from cycle day {evidence.rise_start} (change point, Hilgers 1980)")
    return f"Dated by this cycle: {'; '.join(signs)}; {then}, a luteal phase later."


def _evidence_only(likelihood: dict[int, float], luteal: Predictive) -> Grid:
    """Ovulation from the evidence alone, when it lies outside anything the history allows."""
    t_first, t_masses = day_masses(luteal.centre, luteal.scale, luteal.dof, 1)
    weights = {o: lk for o, lk in sorted(likelihood.items()) if lk > 0.0}
    luteal_total = math.fsum(t_masses)
    return Grid(weights, {o: lk * luteal_total for o, lk in weights.items()}, t_first, t_masses, 0, (), 0.0, 1.0)


def _peak(pattern_days: tuple[Sequence[int], Sequence[float]], width: int) -> float:
    """The highest P(fertile) of any cycle day by the pattern: how peaked her own curve is."""
    by_day = dict(zip(*pattern_days))
    first, last = min(by_day), max(by_day)
    return round(min(max(_fertile(by_day, d, width) for d in range(max(first - width + 1, 1), last + 1)), 1.0), 4)


def _fertile(p_ovulation: dict[int, float], d: int, width: int) -> float:
    """P(fertile) on cycle day d = P(ovulation falls on d .. d + width - 1) (Wilcox 1995)."""
    return math.fsum(p_ovulation.get(o, 0.0) for o in range(d, d + width))


def _daily(p_ovulation: dict[int, float], cycle_day: int, today: date, width: int) -> tuple[DayChance, ...]:
    out = []
    for ahead in range(DAILY_DAYS):
        p = _fertile(p_ovulation, cycle_day + ahead, width)
        out.append(DayChance(today + timedelta(days=ahead), round(min(max(p, 0.0), 1.0), 4)))
    return tuple(out)
