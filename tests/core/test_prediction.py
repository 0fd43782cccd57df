"""Prediction of ovulation, the fertile days and the next period."""

import math
from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.analysis import analyse
from caseload.core.model import Kind, Observation, Patient, Value
from caseload.core.prediction import (
    Evidence,
    calendar_rule,
    cycle_predictive,
    luteal_predictive,
    predict,
    predictive,
)
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.settings import Protocol
from caseload.core.thermal import COVERLINE_FORM

PATIENT = Patient("p", "Test Patient", date(1992, 4, 2), None)
START = date(2024, 1, 1)


def history(lengths: list[int], luteal: int = 14, current_day: int = 1):
    """Complete cycles of the given lengths, each with an LH surge dating ovulation `luteal`
    days before the next period; then an open cycle, returned with the day it is at."""
    obs, day = [], START
    for length in lengths:
        obs += [Observation(day + timedelta(days=i), Kind.BLEED, Value(word="moderate")) for i in range(4)]
        ovulation = length - luteal  # cycle day
        obs.append(Observation(day + timedelta(days=ovulation - 2), Kind.LH, Value(word="positive")))
        day += timedelta(days=length)
    obs.append(Observation(day, Kind.BLEED, Value(word="heavy")))
    return obs, day, day + timedelta(days=current_day - 1)


def cycle_day(start: date, day: date) -> int:
    return (day - start).days + 1


@pytest.mark.parametrize(
    "shortest, longest, expected",
    [
        # WHO Global Handbook (calendar rhythm method) worked example: 27 and 31 give days 9 to 20.
        (27, 31, (9, 20)),
        # Standard Days Method (Arevalo 2002) for cycles of 26-32 days starts on day 8 as well;
        # it ends on day 19 because it comes from a probability model, not this arithmetic.
        (26, 32, (8, 21)),
    ],
)
def test_ogino_knaus(shortest, longest, expected):
    assert calendar_rule([shortest, 29, 28, longest, 30, 28], P) == expected


def test_calendar_rule_needs_six_cycles_and_uses_the_six_latest():
    # WHO Global Handbook: at least 6 cycles, recomputed from the 6 most recent.
    assert calendar_rule([27, 31, 28, 29, 30], P) is None
    assert calendar_rule([21, 27, 31, 28, 29, 30, 28], P) == (9, 20)


def test_hierarchical_prior_weighs_as_a_prior():
    # Hierarchical normal model: between-women variance 3.4^2 - 2.5^2 = 5.31 (Fehring 2006 total
    # SD 3.4, usual within-woman SD 2.5, from memory). Three cycles of 24 days: her variance pools to
    # 3 * 2.5^2 / 5 = 3.75, so the population mean weighs 3.75 / 5.31 = 0.706 cycles.
    w = 3.75 / 5.31
    assert predictive([24, 24, 24], 28.9, 3.4, 2.5, 3.0).centre == pytest.approx((w * 28.9 + 72) / (w + 3), abs=1e-3)
    none = predictive([], 28.9, 3.4, 2.5, 3.0)
    assert (none.centre, none.scale, none.observed) == (28.9, 3.4, 0)
    # A scattered history of the same mean is pulled harder than a consistent one.
    steady = predictive([24] * 6, 28.9, 3.4, 2.5, 3.0).centre
    scattered = predictive([18, 30, 18, 30, 18, 30], 28.9, 3.4, 2.5, 3.0).centre
    assert steady < 24.5 and scattered - 24 > 2 * (steady - 24)


@pytest.mark.parametrize("length", range(22, 39))
def test_consistent_cycles_are_not_pulled_to_the_population_mean(length):
    # Common practice: ovulation about 14 days before the next period. Six identical cycles of any
    # length in 22-38 (FIGO 2018 normal frequency 24-38, and a little beyond) put ovulation within a
    # day of L - 14, whatever the population mean (Fehring 2006: 28.9 days).
    obs, start = [], START
    for _ in range(6):
        obs.append(Observation(start, Kind.BLEED, Value(word="moderate")))
        start += timedelta(days=length)
    obs.append(Observation(start, Kind.BLEED, Value(word="moderate")))
    p = analyse(PATIENT, obs, start + timedelta(days=1)).prediction
    assert abs(cycle_day(start, p.ovulation) - (length - 14)) <= 1
    assert abs(cycle_day(start, p.next_period) - (length + 1)) <= 1


@pytest.mark.parametrize("length, ovulation_day", [(28, 14), (30, 16), (26, 12)])
def test_steady_14_day_luteal_phase(length, ovulation_day):
    # Common practice: ovulation about 14 days before the period, day 14 of a 28-day cycle,
    # 16 of 30, 12 of 26. The population prior is switched off to test the arithmetic.
    obs, start, today = history([length] * 8, luteal=14, current_day=2)
    a = analyse(PATIENT, obs, today, Protocol(prior_weight_cycles=0))
    p = a.prediction
    assert cycle_day(start, p.ovulation) == ovulation_day
    # Wilcox 1995: the fertile window is the six days ending on the day of ovulation.
    assert p.fertile_window == (p.ovulation - timedelta(days=5), p.ovulation)
    assert p.next_period == start + timedelta(days=length)


def test_with_the_prior_on_a_short_history_leans_toward_the_population():
    obs, start, today = history([26] * 3, luteal=14, current_day=2)
    p = analyse(PATIENT, obs, today).prediction
    # Cycle (0.706 * 28.9 + 78) / 3.706 = 26.55 days; luteal 14.02 (her 14s, prior 14.13): ovulation ~12.5.
    assert p.cycle_length.centre == pytest.approx(26.55, abs=0.01)
    assert cycle_day(start, p.ovulation) in (12, 13)


def test_wilcox_2000_every_day_6_to_21_at_least_ten_percent():
    # Wilcox 2000 (BMJ): with regular cycles, at least a 10% chance of being in the fertile window
    # on every cycle day from 6 to 21. Population prior alone (one cycle start, no history).
    obs = [Observation(START, Kind.BLEED, Value(word="moderate"))]
    p = analyse(PATIENT, obs, START).prediction
    by_day = {cycle_day(START, d): m for d, m in p.ovulation_distribution}
    for day in range(6, 22):
        chance = sum(by_day.get(o, 0.0) for o in range(day, day + 6))
        assert chance >= 0.10, (day, chance)
    assert [c.p_fertile for c in p.daily[5:14]] == pytest.approx(
        [sum(by_day.get(o, 0.0) for o in range(d, d + 6)) for d in range(6, 15)], abs=1e-4
    )


def test_distributions_sum_to_one_and_chances_are_probabilities():
    obs, start, today = history([27, 29, 31], current_day=9)
    p = analyse(PATIENT, obs, today).prediction
    assert math.fsum(m for _, m in p.ovulation_distribution) == pytest.approx(1.0, abs=1e-5)
    assert all(0.0 <= c.p_fertile <= 1.0 for c in p.daily)
    assert len(p.daily) == 14 and p.daily[0].day == today


def flat_temps(start: date, days: int) -> list[Observation]:
    return [
        Observation(start + timedelta(days=i), Kind.TEMP, Value(number=36.45 + 0.05 * (i % 2))) for i in range(days)
    ]


def test_days_watched_with_no_sign_are_excluded():
    # Daily temperatures to day 20 and no shift: ovulation before day 18 would by now show as a
    # shift confirmed on the third high reading, so the distribution starts at day 18.
    obs, start, today = history([28] * 6, current_day=20)
    p = analyse(PATIENT, obs + flat_temps(start, 20), today).prediction
    assert min(cycle_day(start, d) for d, _ in p.ovulation_distribution) == 18
    assert p.evidence == "elapsed"
    # The pattern's expectation stays; the outlook moves: the next period follows the later
    # ovulation by her luteal length (Lenton 1984, about 14 days), and the words say "not yet".
    early = analyse(PATIENT, obs, start + timedelta(days=1)).prediction
    assert p.expected_ovulation_range == early.expected_ovulation_range
    assert cycle_day(start, p.ovulation) >= 18
    assert 13 <= (p.next_period - p.ovulation).days - 1 <= 15
    assert p.next_period > early.next_period
    assert p.reason.startswith("Not yet") and f"most likely cycle day {cycle_day(start, p.ovulation)}" in p.reason


@pytest.mark.parametrize("length, today_cd", [(28, 24), (28, 27), (32, 24), (32, 28), (26, 20)])
def test_outlook_next_period_is_ovulation_plus_luteal_length(length, today_cd):
    # Common practice: the next period comes a luteal phase (about 14 days) after ovulation; a
    # 7-day gap between them would contradict her own history of 14-day phases.
    obs, start, today = history([length] * 6, current_day=today_cd)
    p = analyse(PATIENT, obs + flat_temps(start, today_cd), today).prediction
    assert p.evidence == "elapsed"
    assert 13 <= (p.next_period - p.ovulation).days - 1 <= 15


def test_a_run_of_negative_lh_tests_from_before_the_surge_excludes_the_days_it_covers():
    # A run of tests no more than 2 days apart (a surge lasts about two days, from memory) begun
    # before the expected surge: ovulation is after the last test plus a day (WHO Task Force 1980).
    obs, start, today = history([28] * 6, current_day=16)
    obs += [Observation(start + timedelta(days=d - 1), Kind.LH, Value(word="negative")) for d in (9, 11, 12, 13, 15)]
    p = analyse(PATIENT, obs, today).prediction
    assert min(cycle_day(start, d) for d, _ in p.ovulation_distribution) == 16
    assert p.evidence == "elapsed"


@pytest.mark.parametrize("length, test_days", [(28, (24,)), (28, (20,)), (28, (13, 14, 15)), (32, (27,)), (28, (14, 17))])
def test_a_negative_lh_test_is_not_evidence_that_ovulation_is_ahead(length, test_days):
    # A lone negative or a run begun after the earliest expected surge says nothing of
    # whether ovulation has passed: P(fertile) is what the pattern alone gives.
    today_cd = max(test_days) + 1
    obs, start, today = history([length] * 6, current_day=today_cd)
    plain = analyse(PATIENT, obs, today).prediction
    tested = obs + [Observation(start + timedelta(days=d - 1), Kind.LH, Value(word="negative")) for d in test_days]
    p = analyse(PATIENT, tested, today).prediction
    assert p.evidence == "pattern" and p.daily == plain.daily


def test_negative_tests_after_the_expected_range_say_nothing_of_the_days_in_it():
    # Daily negatives from day 9 to day 24 of a 28-day pattern: the run covers the expected surge,
    # but the tests past the expected ovulation range do not push ovulation beyond it.
    obs, start, today = history([28] * 6, current_day=25)
    obs += [Observation(start + timedelta(days=d - 1), Kind.LH, Value(word="negative")) for d in range(9, 25)]
    p = analyse(PATIENT, obs, today).prediction
    last_expected = cycle_day(start, p.expected_ovulation_range[1])
    assert min(cycle_day(start, d) for d, _ in p.ovulation_distribution) == last_expected + 1


@pytest.mark.parametrize("watched", [16, 20, 26, 30, 35, 38])
def test_the_predicted_day_lies_inside_its_own_range_however_long_nothing_shows(watched):
    # Daily readings with no rise up to `watched`: the days left form a flat stretch then a tail,
    # where the single most likely day is merely the first. Whatever the stretch, the day shown lies
    # inside the 80% range shown beside it, and the fertile window ends on it.
    obs, start, today = history([28] * 6, current_day=watched + 1)
    p = analyse(PATIENT, obs + flat_temps(start, watched), today).prediction
    assert p.evidence == "elapsed"
    assert p.ovulation_range[0] <= p.ovulation <= p.ovulation_range[1]
    assert p.fertile_window[1] == p.ovulation


def test_with_nothing_watched_the_pattern_stands():
    obs, start, today = history([28] * 6, current_day=20)
    p = analyse(PATIENT, obs, today).prediction
    assert p.evidence == "pattern" and p.ovulation == p.expected_ovulation
    assert cycle_day(start, p.ovulation) == 14


def test_a_positive_lh_test_puts_ovulation_a_day_later():
    # WHO Task Force 1980: median 32 h from the LH rise to ovulation.
    obs, start, today = history([28] * 6, current_day=11)
    obs.append(Observation(today, Kind.LH, Value(word="positive")))
    p = analyse(PATIENT, obs, today).prediction
    assert p.ovulation == today + timedelta(days=1) and p.evidence == "lh"
    assert p.ovulation_range[0] >= today - timedelta(days=1)
    assert p.ovulation_range[1] <= today + timedelta(days=2)


def test_a_confirmed_shift_puts_ovulation_in_the_past():
    # Hilgers 1980: ovulation from 6 days before the first day of the rise; with a confirmed
    # shift only the days before the first high remain, and no day ahead is fertile.
    start = START
    lows = {d: 36.40 + 0.05 * (d % 3) for d in range(2, 17)}
    highs = {17: 36.80, 18: 36.85, 19: 36.80}
    obs = [Observation(start, Kind.BLEED, Value(word="moderate"))]
    obs += [Observation(start + timedelta(days=d - 1), Kind.TEMP, Value(number=t)) for d, t in (lows | highs).items()]
    today = start + timedelta(days=19 - 1)
    p = analyse(PATIENT, obs, today).prediction
    days = [cycle_day(start, d) for d, m in p.ovulation_distribution if m > 0]
    # The rise dated to day 17 dates ovulation to day 16, give or take a day: inside Hilgers' range.
    assert (min(days), max(days)) == (15, 17) and cycle_day(start, p.ovulation) == 16
    assert p.evidence == "shift"
    assert all(c.p_fertile == 0.0 for c in p.daily[1:])
    # The period is due about a luteal phase (Lenton 1984: 14.13 days) after ovulation.
    assert 27 <= cycle_day(start, p.next_period) <= 32


@pytest.mark.parametrize("rise", [15, 19, 24, 27])
def test_a_confirmed_shift_dates_the_forecast_as_it_dates_the_cycle(rise):
    # Six 28-day cycles, then a shift that rises on `rise`: late ones included, the forecast puts
    # ovulation where the cycle record does (the day before the rise), and the period a luteal phase
    # (Lenton 1984: 14.13 days) after it, not back towards her usual day 14.
    obs, start, _ = history([28] * 6)
    temps = {d: 36.40 + 0.05 * (d % 3) for d in range(2, rise)} | {d: 36.80 + 0.05 * (d % 2) for d in range(rise, rise + 8)}
    obs += _readings(start, temps)
    today = start + timedelta(days=rise + 7 - 1)
    a = analyse(PATIENT, obs, today)
    assert cycle_day(start, a.current.markers.ovulation) == rise - 1
    assert cycle_day(start, a.prediction.ovulation) == rise - 1
    assert cycle_day(start, a.prediction.next_period) == rise - 1 + 14 + 1
    low, high = (cycle_day(start, d) for d in a.prediction.next_period_range)
    assert low <= rise + 14 <= high


def test_ovulation_before_day_one_is_impossible():
    # An LH surge on day 1 gives ovulation on day 1 or 2, never the day before.
    obs = [Observation(START, Kind.BLEED, Value(word="moderate")), Observation(START, Kind.LH, Value(word="positive"))]
    p = analyse(PATIENT, obs, START).prediction
    assert min(d for d, _ in p.ovulation_distribution) >= START
    assert p.fertile_window[0] >= START


def test_evidence_beyond_the_history_is_not_forced_into_it():
    # Regular 28-day cycles, but an LH surge on day 40: ovulation follows the test.
    obs, start, today = history([28] * 12, current_day=40)
    obs.append(Observation(today, Kind.LH, Value(word="positive")))
    p = analyse(PATIENT, obs, today).prediction
    assert p.ovulation == today + timedelta(days=1)


def test_a_cycle_watched_far_beyond_the_history_has_no_ovulation_forecast():
    obs, start, today = history([28] * 12, current_day=70)
    p = analyse(PATIENT, obs + flat_temps(start, 70), today).prediction
    assert p.ovulation is None and p.ovulation_range is None and p.daily == ()
    assert p.next_period < today  # the period is late, and shows as late


def test_predict_directly_from_evidence():
    cycle, luteal = cycle_predictive([28] * 12, P), luteal_predictive([14] * 12, P)
    p = predict(START, Evidence(1, None, None, None), cycle, luteal, [28] * 12, START, P)
    assert cycle_day(START, p.ovulation) == 14
    assert p.ovulation_range[0] <= p.ovulation <= p.ovulation_range[1]
    assert p.next_period_range[0] <= p.next_period <= p.next_period_range[1]


def _readings(start: date, values: dict[int, float]) -> list[Observation]:
    return [Observation(start + timedelta(days=d - 1), Kind.TEMP, Value(number=t)) for d, t in values.items()]


LOWS_TO_14 = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 15)}
# A ramp the coverline form never confirms; the change point's high level starts on day 16.
COVER = replace(P, shift_rule=COVERLINE_FORM)
RAMP = LOWS_TO_14 | {15: 36.52, 16: 36.60, 17: 36.68, 18: 36.70, 19: 36.75, 20: 36.70, 21: 36.75}


def test_a_rise_only_the_change_point_sees_is_weaker_evidence_than_a_shift():
    # Hilgers 1980: ovulation from 6 days before to 3 days after the first day of the rise (day 16).
    # Unlike a confirmed shift the days after it are kept, but day 21 is past them all.
    obs, start, today = history([28] * 6, current_day=21)
    p = analyse(PATIENT, obs + _readings(start, RAMP), today, COVER).prediction
    assert p.evidence == "change-point"
    days = [cycle_day(start, d) for d, m in p.ovulation_distribution if m > 0]
    assert (min(days), max(days)) == (16 - 6, 16 + 3)
    assert p.daily[0].p_fertile == 0.0
    # The same days with no rise leave ovulation ahead, and today possibly fertile.
    level = LOWS_TO_14 | {d: 36.45 for d in range(15, 22)}
    flat = analyse(PATIENT, obs + _readings(start, level), today, COVER).prediction
    assert flat.evidence == "elapsed" and flat.daily[0].p_fertile > 0.1


def test_a_change_point_needs_three_readings_at_the_high_level():
    obs, start, _ = history([28] * 6, current_day=17)
    early = {d: t for d, t in RAMP.items() if d <= 17}
    p = analyse(PATIENT, obs + _readings(start, early), start + timedelta(days=16), COVER).prediction
    assert p.evidence == "elapsed"


def test_an_lh_surge_and_a_change_point_combine():
    # WHO Task Force 1980: ovulation about a day after the surge (day 14 -> 15), inside Hilgers'
    # range around a rise on day 16.
    cycle, luteal = cycle_predictive([28] * 12, P), luteal_predictive([14] * 12, P)
    today = START + timedelta(days=19)
    p = predict(START, Evidence(20, None, 14, None, rise_start=16), cycle, luteal, [28] * 12, today, P)
    assert p.evidence == "lh+change-point" and cycle_day(START, p.ovulation) == 15


@pytest.mark.parametrize("length", [26, 28, 32])
def test_sporadic_late_ovulation_keeps_a_tail_in_regular_women(length):
    # Wilcox 2000 (BMJ): the window can come late sporadically even in regular women, 4-6%
    # potentially fertile in the fifth week. A regular history keeps a small daily tail (the late
    # share, 5%, spread over days 8-42: 0.05 * 6 / 35 = 0.9% a day at least) instead of 0.000.
    obs, start, today = history([length] * 6, current_day=length - 6)
    p = analyse(PATIENT, obs, today).prediction
    late = [c.p_fertile for c in p.daily[8 : 44 - length]]  # cycle days length + 2 to 37, whole windows
    assert all(0.0085 <= c <= 0.05 for c in late)
    # No ovulation in the first days of flow (common practice: not before cycle day 8).
    assert min(cycle_day(start, d) for d, m in p.ovulation_distribution if m > 0) == 8


@pytest.mark.parametrize("watched_to", [29, 31, 34])
def test_watched_with_no_sign_into_the_fifth_week_she_may_still_be_fertile(watched_to):
    # Wilcox 2000: 4-6% of women whose cycles had not resumed were potentially fertile in the fifth
    # week. Flat temperatures to that day in a regular 28-day woman leave P(fertile) today at least 4%.
    obs, start, today = history([28] * 6, current_day=watched_to)
    p = analyse(PATIENT, obs + flat_temps(start, watched_to), today).prediction
    assert p.daily[0].p_fertile >= 0.04
    assert p.reason.startswith("Not yet")


def test_p_fertile_is_shown_as_a_percentage_too():
    from caseload.presentation.json_shapes import analysis_json

    obs, start, today = history([28] * 6, current_day=10)
    out = analysis_json(analyse(PATIENT, obs, today))
    for day in out["prediction"]["daily"]:
        assert day["p_fertile_percent"] == round(100 * day["p_fertile"], 1)
    assert out["prediction"]["reason"].startswith("From her 6 cycles")


def test_the_ovulation_distribution_matches_scipy():
    # Cross-check with scipy.stats.t: the pattern is L - T of two whole-day Student's t lengths
    # (day k takes the mass from k - 0.5 to k + 0.5), never before day 8, weighted 0.95; the
    # sporadic late ovulation (Wilcox 2000) adds 0.05 spread evenly over days 8 to 42.
    from collections import defaultdict

    from scipy import stats

    cycle, luteal = cycle_predictive([27, 29, 31, 28, 30], P), luteal_predictive([13, 14], P)
    p = predict(START, Evidence(1, None, None, None), cycle, luteal, [27, 29, 31, 28, 30], START, P)
    got = {cycle_day(START, d): m for d, m in p.ovulation_distribution}

    def masses(pred, first: int) -> dict[int, float]:
        dist = stats.t(pred.dof, loc=pred.centre, scale=pred.scale)
        out = {k: dist.cdf(k + 0.5) - dist.cdf(k - 0.5) for k in range(first, round(pred.centre + 10 * pred.scale) + 1)}
        total = sum(out.values())
        return {k: v / total for k, v in out.items()}

    pattern: defaultdict[int, float] = defaultdict(float)
    for length, a in masses(cycle, 2).items():
        for t, b in masses(luteal, 1).items():
            if length - t >= 8:
                pattern[length - t] += a * b
    total = sum(pattern.values())
    spread = max(got) - 7  # the late share runs to day 42 or the pattern's far tail, whichever is later
    assert min(got) == 8 and spread >= 35
    for o in range(8, 43):
        assert got.get(o, 0.0) == pytest.approx(0.95 * pattern.get(o, 0.0) / total + 0.05 / spread, abs=2e-4), o
