"""Prediction for the current cycle as a probability distribution over the ovulation cycle day.

Cycle length L and luteal length T (days from the day after ovulation to the day before the next
period, Lenton 1984) each come from a Bayesian normal model: the patient's own values shrunk
toward a population prior (cycle: Fehring 2006; luteal: Lenton 1984) that carries
`prior_weight_cycles` cycles' worth of weight. With the variance learnt too, the predictive is
Student's t; its heavier tails are what let the population prior alone meet Wilcox 2000 (at
least a 10% chance of being in the fertile window on every cycle day 6 to 21), which a normal
with the same figures misses (6% on day 21). Ovulation falls on cycle day O = L - T and the next
period on day L + 1. The current cycle's evidence then reweights the joint grid.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Callable
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core.distributions import day_masses
from caseload.core.settings import Protocol

# Hilgers 1980: ovulation lies from 6 days before to 3 days after the first day of the rise;
# a confirmed shift means ovulation is past, so only the days before the first high are kept.
SHIFT_OVULATION_EARLIEST = 6
# A rise only the change point sees is weaker evidence: the whole of Hilgers' range is kept.
RISE_OVULATION_LATEST = 3
# A positive LH test dates ovulation to `lh_to_ovulation_days` later, give or take a day
# (WHO Task Force 1980: 90% ovulated 16 to 48 h after the rise). Weights: common practice.
LH_LIKELIHOOD = {-1: 0.25, 0: 0.5, 1: 0.25}
# Whole days are the record's resolution; a narrower spread would claim more than it knows.
MIN_SCALE_DAYS = 0.5
# The Ogino-Knaus rule is recomputed from the six most recent cycles (WHO Global Handbook).
CALENDAR_RULE_CYCLES = 6
OVULATION_RANGE = (0.10, 0.90)
PERIOD_RANGE = (0.05, 0.95)
DAILY_DAYS = 14


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
    horizon: int | None  # earliest day ovulation can still be on; None when nothing is watched
    rise_start: int | None = None  # first day of a rise the change point sees without a confirmed shift


def watch_horizon(reading_days: list[int], lh_test_days: list[int], protocol: Protocol) -> int | None:
    """The earliest cycle day ovulation can still be on when the watching has shown no sign of it.

    Temperatures: ovulation before the last `shift_confirm_readings` readings would have given a
    confirmed shift by now, provided there were enough readings for the rule to work at all.
    LH: a surge precedes ovulation, so none up to the last test means ovulation is not past it.
    """
    found = []
    confirm = protocol.shift_confirm_readings
    if len(reading_days) >= protocol.shift_low_days + confirm:
        found.append(reading_days[-confirm])
    if lh_test_days:
        found.append(lh_test_days[-1])
    return max(found, default=None)


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


def predictive(values: list[int], prior_mean: float, prior_sd: float, prior_weight: float) -> Predictive:
    """Normal model with a conjugate normal-inverse-chi-squared prior (kappa0 = nu0 = prior weight).

    With no values the prior stands alone, whatever its weight.
    """
    n = len(values)
    weight = prior_weight if n else max(prior_weight, 1.0)
    kappa = weight + n
    mean = sum(values) / n if n else prior_mean
    spread = sum((v - mean) ** 2 for v in values)
    centre = (weight * prior_mean + n * mean) / kappa
    variance = (weight * prior_sd**2 + spread + weight * n / kappa * (mean - prior_mean) ** 2) / kappa
    scale = max(math.sqrt(variance * (1 + 1 / kappa)), MIN_SCALE_DAYS)
    return Predictive(round(centre, 4), round(scale, 4), kappa, n)


def calendar_rule(lengths: list[int], protocol: Protocol) -> tuple[int, int] | None:
    """Ogino-Knaus: first fertile day = shortest - 18, last = longest - 11 (WHO Global Handbook)."""
    if len(lengths) < protocol.calendar_rule_min_cycles:
        return None
    recent = lengths[-CALENDAR_RULE_CYCLES:]
    return max(min(recent) - 18, 1), max(max(recent) - 11, 1)


def _quantile(days: list[int], masses: list[float], p: float) -> int:
    total = 0.0
    for day, mass in zip(days, masses):
        total += mass
        if total >= p - 1e-12:
            return day
    return days[-1]


def _marginal(grid: dict[tuple[int, int], float], index: int) -> tuple[list[int], list[float]]:
    sums: defaultdict[int, float] = defaultdict(float)
    if index == 0:
        for (o, _), weight in grid.items():
            sums[o] += weight
    else:
        for (_, n), weight in grid.items():
            sums[n] += weight
    total = math.fsum(sums.values())
    days = sorted(sums)
    return days, [sums[d] / total for d in days]


def _summary(
    days: list[int], probs: list[float], bounds: tuple[float, float], on: Callable[[int], date]
) -> tuple[date, tuple[date, date]]:
    """(most likely date, (lower, upper) dates) of one margin of the grid."""
    best = days[max(range(len(probs)), key=probs.__getitem__)]
    return on(best), (on(_quantile(days, probs, bounds[0])), on(_quantile(days, probs, bounds[1])))


def _weighted(grid: dict[tuple[int, int], float], likelihood: dict[int, float]) -> dict[tuple[int, int], float]:
    """The grid times a likelihood over the ovulation day; empty when nothing is left."""
    out = {key: w * likelihood[key[0]] for key, w in grid.items() if likelihood.get(key[0], 0.0) > 0.0}
    return out if math.fsum(out.values()) > 0.0 else {}


def _evidence_likelihoods(evidence: Evidence, protocol: Protocol) -> list[tuple[str, dict[int, float]]]:
    """Likelihoods of the ovulation day from this cycle's evidence, most trusted first."""
    found = []
    if evidence.lh_surge is not None:
        centre = evidence.lh_surge + protocol.lh_to_ovulation_days
        found.append(("lh", {centre + k: w for k, w in LH_LIKELIHOOD.items() if centre + k >= 1}))
    if evidence.first_high is not None:
        f = evidence.first_high
        found.append(("shift", {o: 1.0 for o in range(max(f - SHIFT_OVULATION_EARLIEST, 1), f)}))
    if evidence.rise_start is not None:
        r = evidence.rise_start
        rise = range(max(r - SHIFT_OVULATION_EARLIEST, 1), r + RISE_OVULATION_LATEST + 1)
        found.append(("change-point", {o: 1.0 for o in rise}))
    return found


def _combined(found: list[tuple[str, dict[int, float]]]) -> dict[int, float]:
    days = set.intersection(*(set(lk) for _, lk in found))
    return {o: math.prod(lk[o] for _, lk in found) for o in days}


def _joint(cycle: Predictive, luteal: Predictive) -> dict[tuple[int, int], float]:
    """P(O = o, N = n) on whole cycle days, N being the next period's cycle day; O >= 1."""
    l_first, l_masses = day_masses(cycle.centre, cycle.scale, cycle.dof, 2)
    t_first, t_masses = day_masses(luteal.centre, luteal.scale, luteal.dof, 1)
    grid: dict[tuple[int, int], float] = {}
    for i, pl in enumerate(l_masses):
        length = l_first + i
        base = length - t_first  # o = base - j, so only j < base leaves o >= 1
        for j, pt in enumerate(t_masses[: max(base, 0)]):
            weight = pl * pt
            if weight > 0.0:
                grid[(base - j, length + 1)] = weight
    return grid


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
    pattern = _joint(cycle, luteal)
    found = _evidence_likelihoods(evidence, protocol)
    if not found:
        # Days watched with no sign of ovulation are excluded (truncate and renormalise).
        informed, label = pattern, "pattern" if evidence.horizon is None else "elapsed"
        horizon = evidence.horizon or 1
        total = math.fsum(w for key, w in pattern.items() if key[0] >= horizon)
        current = {key: w / total for key, w in pattern.items() if key[0] >= horizon} if total > 0.0 else {}
    else:
        label = "+".join(name for name, _ in found)
        # When the history, the LH test and the shift disagree, the most trusted evidence wins alone.
        informed = (
            _weighted(pattern, _combined(found))
            or _weighted(pattern, found[0][1])
            or _evidence_only(found[0][1], luteal)
        )
        current = informed

    def on(cycle_day: int) -> date:
        return start + timedelta(days=cycle_day - 1)

    expected, expected_range = _summary(*_marginal(pattern, 0), OVULATION_RANGE, on)
    next_period, period_range = _summary(*_marginal(informed, 1), PERIOD_RANGE, on)
    ovulation = ov_range = window = None
    daily: tuple[DayChance, ...] = ()
    distribution: tuple[tuple[date, float], ...] = ()
    if current:
        days, probs = _marginal(current, 0)
        ovulation, ov_range = _summary(days, probs, OVULATION_RANGE, on)
        width = protocol.fertile_window_days
        window = (max(ovulation - timedelta(days=width - 1), start), ovulation)
        distribution = tuple((on(d), round(p, 6)) for d, p in zip(days, probs))
        daily = _daily(dict(zip(days, probs)), evidence.cycle_day, today, width)
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
    )


def _evidence_only(likelihood: dict[int, float], luteal: Predictive) -> dict[tuple[int, int], float]:
    """Ovulation from the evidence alone, when it lies outside anything the history allows."""
    t_first, t_masses = day_masses(luteal.centre, luteal.scale, luteal.dof, 1)
    return {
        (o, o + t_first + j + 1): lk * pt
        for o, lk in likelihood.items()
        for j, pt in enumerate(t_masses)
        if lk * pt > 0.0
    }


def _daily(p_ovulation: dict[int, float], cycle_day: int, today: date, width: int) -> tuple[DayChance, ...]:
    """P(fertile) on day d = P(ovulation falls on d .. d + width - 1) (Wilcox 1995)."""
    out = []
    for ahead in range(DAILY_DAYS):
        d = cycle_day + ahead
        p = math.fsum(p_ovulation.get(o, 0.0) for o in range(d, d + width))
        out.append(DayChance(today + timedelta(days=ahead), round(min(max(p, 0.0), 1.0), 4)))
    return tuple(out)
