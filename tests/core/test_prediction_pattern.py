"""The forecast's part that rests on the completed cycles alone, kept in memory once per input."""

import math
from dataclasses import replace
from datetime import date

import pytest
from scipy import stats

from caseload.core import prediction
from caseload.core.distributions import SUPPORT_SCALES
from caseload.core.prediction import Evidence, Predictive, cycle_predictive, luteal_predictive, pattern_of, predict
from caseload.core.settings import DEFAULT_PROTOCOL as P

# Several completed-cycle histories: none, regular, scattered, long, short luteal phases.
CHARTS = [
    ([], []),
    ([28, 28, 29, 27, 28], [14, 14, 13]),
    ([24, 35, 29, 41, 26, 31], [12, 15]),
    ([36, 38, 35, 37], [11, 10, 11, 12]),
    ([22], []),
]
PROTOCOLS = [
    P,
    replace(P, earliest_ovulation_day=P.earliest_ovulation_day + 3),
    replace(P, late_ovulation_share=0.0),
    replace(P, late_ovulation_last_day=P.late_ovulation_last_day + 7),
    replace(P, fertile_window_days=P.fertile_window_days - 1),
]


def _fresh(lengths: list[int], luteals: list[int], protocol):
    """The pattern computed anew, past the memo."""
    p = protocol
    return prediction._pattern.__wrapped__(
        cycle_predictive(lengths, p), luteal_predictive(luteals, p), p.earliest_ovulation_day,
        p.late_ovulation_share, p.late_ovulation_last_day, p.fertile_window_days,
    )


@pytest.mark.parametrize("lengths, luteals", CHARTS)
@pytest.mark.parametrize("protocol", PROTOCOLS)
def test_the_kept_pattern_equals_a_fresh_computation(lengths, luteals, protocol):
    prediction._pattern.cache_clear()
    cycle, luteal = cycle_predictive(lengths, protocol), luteal_predictive(luteals, protocol)
    first = pattern_of(cycle, luteal, protocol)
    again = pattern_of(cycle, luteal, protocol)
    assert again is first  # the second save finds it kept
    fresh = _fresh(lengths, luteals, protocol)
    assert list(first.grid.row_mass.items()) == list(fresh.grid.row_mass.items())  # same days, same order, same floats
    assert first.grid == fresh.grid
    assert first.ovulation == fresh.ovulation
    assert first.peak_p_fertile == fresh.peak_p_fertile


@pytest.mark.parametrize("lengths, luteals", CHARTS[1:])
def test_a_changed_protocol_is_not_served_the_old_pattern(lengths, luteals):
    prediction._pattern.cache_clear()
    for protocol in PROTOCOLS:  # each after the others are kept
        cycle, luteal = cycle_predictive(lengths, protocol), luteal_predictive(luteals, protocol)
        assert pattern_of(cycle, luteal, protocol) == _fresh(lengths, luteals, protocol)
    # Keyed on every protocol field the pattern reads: five protocols, five patterns.
    assert prediction._pattern.cache_info().currsize == len(PROTOCOLS)


@pytest.mark.parametrize("lengths, luteals", CHARTS)
@pytest.mark.parametrize("evidence", [
    Evidence(9, None, None, None),
    Evidence(20, None, None, 16),
    Evidence(22, 17, None, None),
    Evidence(16, None, 14, None, lh_negatives=(11, 12)),
])  # fmt: skip
def test_a_forecast_from_the_kept_pattern_equals_one_from_scratch(lengths, luteals, evidence):
    cycle, luteal = cycle_predictive(lengths, P), luteal_predictive(luteals, P)
    start, today = date(2025, 3, 1), date(2025, 3, evidence.cycle_day)
    prediction._pattern.cache_clear()
    cold = predict(start, evidence, cycle, luteal, lengths, today, P)
    warm = predict(start, evidence, cycle, luteal, lengths, today, P)
    assert prediction._pattern.cache_info().hits == 1
    assert warm == cold


def test_the_kept_grid_cannot_be_changed_by_a_caller():
    kept = pattern_of(cycle_predictive([28, 29], P), luteal_predictive([], P), P)
    with pytest.raises(TypeError):
        kept.grid.weights[14] = 2.0  # type: ignore[index]
    with pytest.raises(TypeError):
        kept.grid.row_mass[14] = 2.0  # type: ignore[index]


@pytest.mark.parametrize("lengths", [[28, 28, 29, 27, 28], [26, 31, 29, 33]])
def test_next_period_margin_is_the_cycle_length_a_day_later(lengths):
    """With no sporadic late ovulation the next period falls on cycle day L + 1: where no luteal
    length is cut off, its margin is the cycle length's Student's t by whole days, a day later."""
    protocol = replace(P, late_ovulation_share=0.0, earliest_ovulation_day=1)
    cycle = cycle_predictive(lengths, protocol)
    short_luteal = Predictive(10.0, 0.5, 30.0, 5)  # its support ends on day 15, under any likely length
    kept = pattern_of(cycle, short_luteal, protocol)
    days, probs = prediction._period_margin(kept.grid)
    # scipy.stats.t: mass of (n - 1.5, n - 0.5] for each next-period day n, over the same kept days.
    t = stats.t(cycle.dof, loc=cycle.centre, scale=cycle.scale)
    masses = {n: t.cdf(n - 0.5) - t.cdf(n - 1.5) for n in days}
    by_day = dict(zip(days, probs))
    mode = max(by_day, key=by_day.__getitem__)
    # Lengths of 16 days or more keep every luteal length: there the ratios are the t's own.
    for n, p in by_day.items():
        if n >= 17 and p > 0.0:
            assert p / by_day[mode] == pytest.approx(masses[n] / masses[mode], rel=1e-6)


@pytest.mark.parametrize("lengths, luteals", CHARTS[1:4])
def test_ovulation_margin_is_the_cycle_length_less_the_luteal_length(lengths, luteals):
    """With no sporadic late ovulation, ovulation falls on O = L - T: P(O = o) is the sum over
    luteal lengths t of P(L = o + t) P(T = t), each a Student's t taken by whole days."""
    protocol = replace(P, late_ovulation_share=0.0, earliest_ovulation_day=1)
    cycle, luteal = cycle_predictive(lengths, protocol), luteal_predictive(luteals, protocol)
    days, probs = pattern_of(cycle, luteal, protocol).ovulation
    # scipy.stats.t: each length's mass on whole day k is that of (k - 0.5, k + 0.5], kept on the
    # days within SUPPORT_SCALES scales of the centre, as the forecast keeps them.
    def masses(p: Predictive, first_day: int) -> dict[int, float]:
        t = stats.t(p.dof, loc=p.centre, scale=p.scale)
        lo = max(first_day, math.floor(p.centre - SUPPORT_SCALES * p.scale))
        return {k: t.cdf(k + 0.5) - t.cdf(k - 0.5) for k in range(lo, math.ceil(p.centre + SUPPORT_SCALES * p.scale) + 1)}

    of_length, of_luteal = masses(cycle, 2), masses(luteal, 1)
    expected = {o: sum(of_length.get(o + t, 0.0) * m for t, m in of_luteal.items()) for o in days}
    by_day = dict(zip(days, probs))
    mode = max(by_day, key=by_day.__getitem__)
    assert mode == max(expected, key=expected.__getitem__)
    for o in days:
        if expected[o] > 0.0:
            assert by_day[o] / by_day[mode] == pytest.approx(expected[o] / expected[mode], rel=1e-6)
