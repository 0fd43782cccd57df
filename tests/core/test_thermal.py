"""Thermal shift: the three-over-six rule on hand-built charts, and the change-point split."""

import random
from datetime import date, timedelta

import numpy as np
import pytest
import ruptures

from caseload.core.model import Kind, Observation, Value
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.thermal import Reading, change_point, thermal_shift, valid_readings

DAY1 = date(2024, 3, 1)


def on(cycle_day: int) -> date:
    return DAY1 + timedelta(days=cycle_day - 1)


def temps(values: dict[int, float], disturbed: set[int] = frozenset()) -> list[Observation]:
    return [
        Observation(on(d), Kind.TEMP, Value(number=t), ("illness",) if d in disturbed else ())
        for d, t in sorted(values.items())
    ]


def shift_of(values: dict[int, float], disturbed: set[int] = frozenset(), last_day: int | None = None):
    readings = valid_readings(temps(values, disturbed))
    return thermal_shift(readings, DAY1, on(last_day or max(values)), P)


LOWS = {8: 36.40, 9: 36.35, 10: 36.45, 11: 36.50, 12: 36.40, 13: 36.45}


def test_three_over_six_confirms_on_the_third_high():
    # Marquette NFP three-over-six rule: first high >= 0.2 C over the six before it, coverline
    # 0.1 C over their highest (36.50 -> 36.60), confirmed on the third reading above it.
    chart = LOWS | {14: 36.70, 15: 36.65, 16: 36.75, 17: 36.80}
    shift = shift_of(chart)
    assert shift.first_high == on(14)
    assert shift.coverline == pytest.approx(36.60)
    assert shift.confirmed and shift.confirmed_on == on(16)
    assert shift.low_days == tuple(on(d) for d in range(8, 14))


def test_a_rise_of_exactly_two_tenths_counts():
    # Marquette NFP: "at least 0.2 C"; 36.50 + 0.20 must not fail on floating point.
    shift = shift_of(LOWS | {14: 36.70, 15: 36.70, 16: 36.70})
    assert shift.confirmed and shift.first_high == on(14)


def test_a_rise_of_fifteen_hundredths_does_not_confirm():
    # Marquette NFP: 0.15 C is short of the 0.2 C rise.
    shift = shift_of(LOWS | {14: 36.65, 15: 36.65, 16: 36.65, 17: 36.65})
    assert not shift.confirmed and shift.first_high is None and shift.coverline is None


def test_a_disturbed_reading_is_skipped():
    # A feverish 37.4 among the lows would lift the coverline out of reach; flagged, it is ignored.
    chart = LOWS | {11: 37.40, 14: 36.70, 15: 36.65, 16: 36.75}
    assert not shift_of(chart).confirmed
    shift = shift_of(chart | {7: 36.45}, disturbed={11})
    assert shift.confirmed and shift.coverline == pytest.approx(36.55)


def test_a_disturbed_low_inside_the_highs_does_not_break_the_run():
    shift = shift_of(LOWS | {14: 36.70, 15: 36.30, 16: 36.75, 17: 36.80}, disturbed={15})
    assert shift.confirmed and shift.confirmed_on == on(17)


def test_missing_days_are_tolerated():
    # The rule counts readings: lows every other day, highs on days 21, 23, 26.
    chart = {1: 36.4, 3: 36.35, 5: 36.45, 7: 36.5, 9: 36.4, 11: 36.45, 21: 36.75, 23: 36.7, 26: 36.8}
    shift = shift_of(chart)
    assert shift.first_high == on(21) and shift.confirmed_on == on(26)
    assert shift.coverage == pytest.approx(9 / 26, abs=1e-3)


def test_a_fall_to_the_coverline_restarts_the_search():
    # Day 15 falls to the coverline (36.60, not above it): the day-14 high is dropped and the
    # search resumes; the six readings before day 16 now include 36.70, so a high needs 36.90.
    chart = LOWS | {14: 36.70, 15: 36.60, 16: 36.90, 17: 36.95, 18: 36.85}
    shift = shift_of(chart)
    assert shift.first_high == on(16) and shift.confirmed_on == on(18)
    assert shift.coverline == pytest.approx(36.80)
    assert not shift_of(chart | {16: 36.85}).confirmed


def test_a_pending_shift_reports_its_coverline_before_confirmation():
    shift = shift_of(LOWS | {14: 36.70, 15: 36.68})
    assert not shift.confirmed and shift.first_high == on(14) and shift.coverline == pytest.approx(36.60)
    assert shift.days_above_coverline == 2


def test_days_above_coverline_counts_the_latest_run_in_days():
    chart = LOWS | {d: 36.75 for d in range(14, 30)} | {31: 36.80}
    assert shift_of(chart).days_above_coverline == 31 - 14 + 1


def test_agreement_of_the_rule_and_the_change_point():
    clear = shift_of(LOWS | {14: 36.70, 15: 36.75, 16: 36.75, 17: 36.80, 18: 36.75})
    assert clear.agreement == "agree"
    flat = shift_of({d: 36.40 + 0.05 * (d % 3) for d in range(1, 20)})
    assert flat.agreement == "none"
    # A 0.15 C step fails the rule but a quiet chart shows it as a clear level change.
    step = shift_of({d: 36.40 for d in range(1, 13)} | {d: 36.62 for d in range(13, 20)} | {13: 36.58})
    assert not step.confirmed and step.change_point.passes and step.agreement == "uncertain"


@pytest.mark.parametrize("seed", range(8))
def test_change_point_split_matches_ruptures(seed):
    # Cross-check with the ruptures library (exact dynamic programming, l2 cost).
    rnd = random.Random(seed)
    low_n, high_n = rnd.randint(8, 18), rnd.randint(6, 14)
    series = [36.4 + rnd.gauss(0, 0.08) for _ in range(low_n)] + [36.75 + rnd.gauss(0, 0.08) for _ in range(high_n)]
    readings = [Reading(on(i + 1), round(t, 2)) for i, t in enumerate(series)]
    signal = [[r.celsius] for r in readings]
    expected = ruptures.Dynp(model="l2", min_size=3, jump=1).fit(np.array(signal)).predict(n_bkps=1)[0]
    cp = change_point(readings, P)
    assert [r.day for r in readings].index(cp.split_on) == expected


def test_change_point_figures():
    # Hand-worked: levels 36.4 and 36.8 with +-0.05 noise; residual SD = sqrt(8 * 0.0025 / 6).
    values = [36.35, 36.45, 36.35, 36.45, 36.75, 36.85, 36.75, 36.85]
    cp = change_point([Reading(on(i + 1), v) for i, v in enumerate(values)], P)
    assert cp.split_on == on(5)
    assert cp.difference == pytest.approx(0.4)
    assert cp.strength == pytest.approx(0.4 / (8 * 0.0025 / 6) ** 0.5, rel=1e-3)
    assert cp.passes


def test_too_few_readings_give_no_change_point():
    assert change_point([Reading(on(i), 36.5) for i in range(1, 6)], P) is None
