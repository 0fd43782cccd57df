"""Thermal shift: the three-over-six rule on hand-built charts, the change-point split, the first day of the rise."""

import random
from dataclasses import replace
from datetime import date, timedelta

import numpy as np
import pytest
import ruptures

from caseload.core.model import Kind, Observation, Value
from caseload.core.parse import parse_entry
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.settings import Protocol
from caseload.core.thermal import (
    COVERLINE_FORM,
    Reading,
    change_point,
    excluded_readings,
    thermal_shift,
    three_over_six,
    valid_readings,
)
from tools.sim import simulate_caseload

DAY1 = date(2024, 3, 1)


def on(cycle_day: int) -> date:
    return DAY1 + timedelta(days=cycle_day - 1)


def temps(values: dict[int, float], disturbed: set[int] = frozenset()) -> list[Observation]:
    return [
        Observation(on(d), Kind.TEMP, Value(number=t), ("illness",) if d in disturbed else ())
        for d, t in sorted(values.items())
    ]


def shift_of(
    values: dict[int, float], disturbed: set[int] = frozenset(), last_day: int | None = None, protocol: Protocol = P
):
    readings = valid_readings(temps(values, disturbed), protocol)
    return thermal_shift(readings, DAY1, on(last_day or max(values)), protocol)


LOWS = {8: 36.40, 9: 36.35, 10: 36.45, 11: 36.50, 12: 36.40, 13: 36.45}  # mean 36.425, highest 36.50
COVER = replace(P, shift_rule=COVERLINE_FORM)


def test_three_over_six_confirms_on_the_third_high_above_the_six():
    # Miolo 1993 (WHO multicentre study; Marshall 1968): three consecutive readings all above the
    # six immediately before them. Their mean is 0.275 C above the six's, past the 0.25 C that
    # confirms on the third high (common practice, simulated charts).
    shift = shift_of(LOWS | {14: 36.70, 15: 36.65, 16: 36.75, 17: 36.80})
    assert shift.first_high == on(14) and shift.confirmed and shift.confirmed_on == on(16)
    assert shift.coverline == pytest.approx(36.50)  # the level of the six the highs stay above
    assert shift.low_days == tuple(on(d) for d in range(8, 14))


def test_a_small_rise_waits_for_a_fourth_high():
    # WHO Global Handbook: the rise is 0.2-0.5 C. Three highs 0.205 C over the six's mean do not
    # confirm; a fourth high bringing the mean rise to 0.21 C does; highs 0.125 C up never do.
    small = LOWS | {14: 36.62, 15: 36.63, 16: 36.64}
    assert not shift_of(small).confirmed and shift_of(small).first_high == on(14)
    assert shift_of(small | {17: 36.65}).confirmed_on == on(17)
    assert not shift_of(LOWS | {d: 36.55 for d in range(14, 18)} | {18: 36.30}).confirmed


def test_one_spike_among_the_six_is_set_aside():
    # Miolo 1993: one reading 0.2 C or more above both its neighbours (36.80 between 36.35 and
    # 36.50) is set aside; the highs then need only clear the next highest, 36.50.
    spiked = LOWS | {10: 36.80, 14: 36.70, 15: 36.65, 16: 36.75}
    shift = shift_of(spiked)
    assert shift.confirmed and shift.confirmed_on == on(16) and shift.coverline == pytest.approx(36.50)
    # 0.18 C above a neighbour is no spike; and only one spike is allowed (36.75 on day 12 is another).
    assert not shift_of(spiked | {10: 36.68}).confirmed
    assert not shift_of(spiked | {12: 36.75}).confirmed


@pytest.mark.parametrize("spike_day", [13, 15, 17])
def test_a_spike_set_aside_does_not_date_the_rise(spike_day):
    # Miolo 1993: a reading 0.2 C or more above both neighbours is a spike, set aside. The readings
    # after it fell back, so the rise had not begun at it: with or without it, the rise is dated to
    # the first high (day 19), never to the spike's day, where the change point alone may split.
    plain = {d: (36.45, 36.40, 36.50, 36.35)[d % 4] for d in range(1, 19)} | {d: 36.80 + 0.05 * (d % 2) for d in range(19, 29)}
    spiked = plain | {spike_day: 37.30}
    assert shift_of(plain).rise_start == on(19)
    assert shift_of(spiked).confirmed and shift_of(spiked).rise_start == on(19)


def test_the_rule_slides_past_a_run_that_failed():
    # Miolo 1993: "the first time in the cycle", so a lone high that fell back does not end the
    # search; it is later a spike (36.70 between 36.45 and 36.40) and the next run confirms.
    chart = LOWS | {14: 36.70, 15: 36.40, 16: 36.75, 17: 36.80, 18: 36.75}
    shift = shift_of(chart)
    assert shift.first_high == on(16) and shift.confirmed_on == on(18)
    # Not a spike (0.17 C up): the highs must clear it, and do.
    shift = shift_of(chart | {14: 36.62, 15: 36.45, 16: 36.80, 17: 36.85, 18: 36.80})
    assert shift.first_high == on(16) and shift.confirmed_on == on(18)


@pytest.mark.parametrize("fever", [38.0, 38.1, 38.4, 39.2])
def test_fever_readings_are_not_a_thermal_shift(fever):
    # Readings at or above the fever threshold (38.0 C, common practice) are left out of the shift
    # rules like flagged ones, and listed with the reason.
    chart = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 15)} | {15: fever, 16: fever + 0.1, 17: fever + 0.2}
    obs = temps(chart)
    shift = thermal_shift(valid_readings(obs, P), DAY1, on(17), P, excluded_readings(obs, P))
    assert not shift.confirmed and shift.first_high is None and shift.readings == 14
    assert [(e.day, e.reason) for e in shift.excluded] == [(on(d), "fever") for d in (15, 16, 17)]


def test_a_reading_just_below_the_fever_threshold_counts():
    obs = temps(LOWS | {14: 37.90, 15: 37.95, 16: 37.99})
    assert valid_readings(obs, P)[-1].celsius == 37.99 and not excluded_readings(obs, P)
    assert thermal_shift(valid_readings(obs, P), DAY1, on(16), P).confirmed


def test_coverline_form_confirms_on_the_third_high():
    # Coverline form (common practice): first high >= 0.2 C over the six before it, coverline
    # 0.1 C over their highest (36.50 -> 36.60), confirmed on the third reading above it.
    shift = shift_of(LOWS | {14: 36.70, 15: 36.65, 16: 36.75, 17: 36.80}, protocol=COVER)
    assert shift.first_high == on(14) and shift.coverline == pytest.approx(36.60)
    assert shift.confirmed and shift.confirmed_on == on(16)


def test_coverline_form_a_rise_of_exactly_two_tenths_counts():
    # "at least 0.2 C"; 36.50 + 0.20 must not fail on floating point; 0.15 C falls short.
    assert shift_of(LOWS | {14: 36.70, 15: 36.70, 16: 36.70}, protocol=COVER).first_high == on(14)
    short = shift_of(LOWS | {14: 36.65, 15: 36.65, 16: 36.65, 17: 36.65}, protocol=COVER)
    assert not short.confirmed and short.first_high is None and short.coverline is None


def test_a_disturbed_reading_is_skipped_and_listed():
    # Two feverish-feeling 37.4s among the lows (no single spike) would lift the level out of reach;
    # flagged, they are ignored and listed with their flag.
    chart = LOWS | {11: 37.40, 12: 37.40, 14: 36.70, 15: 36.65, 16: 36.75}
    assert not shift_of(chart).confirmed
    obs = temps(chart | {6: 36.45, 7: 36.40}, disturbed={11, 12})
    shift = thermal_shift(valid_readings(obs, P), DAY1, on(16), P, excluded_readings(obs, P))
    assert shift.confirmed and shift.coverline == pytest.approx(36.45)
    assert [(e.day, e.reason) for e in shift.excluded] == [(on(11), "disturbed: illness"), (on(12), "disturbed: illness")]


def test_a_disturbed_low_inside_the_highs_does_not_break_the_run():
    shift = shift_of(LOWS | {14: 36.70, 15: 36.30, 16: 36.75, 17: 36.80}, disturbed={15})
    assert shift.confirmed and shift.confirmed_on == on(17)


def test_missing_days_are_tolerated():
    # The rule counts readings: lows every other day, highs on days 21, 23, 26.
    chart = {1: 36.4, 3: 36.35, 5: 36.45, 7: 36.5, 9: 36.4, 11: 36.45, 21: 36.75, 23: 36.7, 26: 36.8}
    shift = shift_of(chart)
    assert shift.first_high == on(21) and shift.confirmed_on == on(26)
    assert shift.coverage == pytest.approx(9 / 26, abs=1e-3)


def test_coverline_form_a_fall_to_the_coverline_restarts_the_search():
    # Day 15 falls to the coverline (36.60, not above it): the day-14 high is dropped and the
    # search resumes; the six readings before day 16 now include 36.70, so a high needs 36.90.
    chart = LOWS | {14: 36.70, 15: 36.60, 16: 36.90, 17: 36.95, 18: 36.85}
    shift = shift_of(chart, protocol=COVER)
    assert shift.first_high == on(16) and shift.confirmed_on == on(18)
    assert shift.coverline == pytest.approx(36.80)
    assert not shift_of(chart | {16: 36.85}, protocol=COVER).confirmed


def test_a_pending_shift_reports_its_level_before_confirmation():
    shift = shift_of(LOWS | {14: 36.70, 15: 36.68})
    assert not shift.confirmed and shift.first_high == on(14) and shift.coverline == pytest.approx(36.50)
    assert shift.days_above_coverline == 2


def test_days_above_coverline_counts_the_latest_run_in_days():
    chart = LOWS | {d: 36.75 for d in range(14, 30)} | {31: 36.80}
    assert shift_of(chart).days_above_coverline == 31 - 14 + 1


def test_agreement_of_the_rule_and_the_change_point():
    clear = shift_of(LOWS | {14: 36.70, 15: 36.75, 16: 36.75, 17: 36.80, 18: 36.75})
    assert clear.agreement == "agree"
    flat = shift_of({d: 36.40 + 0.05 * (d % 3) for d in range(1, 20)})
    assert flat.agreement == "none"
    # A 0.2 C step fails the coverline form but a quiet chart shows it as a clear level change.
    step = shift_of({d: 36.40 for d in range(1, 13)} | {d: 36.62 for d in range(13, 20)} | {13: 36.58}, protocol=COVER)
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


def _literal_coverline_form(readings: list[Reading]) -> tuple[int, int] | None:
    """The coverline form read word for word: the first reading at least 0.2 C above each of the six
    valid readings before it whose next two readings also lie above the coverline (0.1 C over those six)."""
    temps = [r.celsius for r in readings]
    for i in range(6, len(temps) - 2):
        highest = max(temps[i - 6 : i])
        if temps[i] >= highest + 0.2 - 1e-9 and all(t > highest + 0.1 + 1e-9 for t in temps[i + 1 : i + 3]):
            return i, i + 2
    return None


def _literal_published(readings: list[Reading]) -> tuple[int, int] | None:
    """Miolo 1993 read word for word: the first three consecutive readings all above the six before
    them, the highest of the six set aside when 0.2 C or more above both neighbours; with the rise
    of the highs' mean over the six's: 0.25 C on three highs, 0.2 C on four."""
    t = [r.celsius for r in readings]
    for i in range(6, len(t)):
        six = t[i - 6 : i]
        top = six.index(max(six))
        left = t[i - 6 + top - 1] if i - 6 + top >= 1 else None
        if left is not None and six[top] >= left + 0.2 - 1e-9 and six[top] >= t[i - 6 + top + 1] + 0.2 - 1e-9:
            six = six[:top] + six[top + 1 :]
        for n, rise in ((3, 0.25), (4, 0.2)):
            highs = t[i : i + n]
            if len(highs) == n and min(highs) > max(six) + 1e-9:
                if sum(highs) / n - sum(six) / len(six) >= rise - 1e-9:
                    return i, i + n - 1
    return None


@pytest.mark.parametrize("form, literal", [(1, _literal_published), (COVERLINE_FORM, _literal_coverline_form)])
def test_the_rule_matches_its_published_wording_on_simulated_charts(form, literal):
    # Three-over-six rule (Miolo 1993; Marshall 1968) and its coverline form (common practice),
    # each checked against a literal reading on every simulated cycle with temperatures.
    protocol = replace(P, shift_rule=form)
    start, end = date(2025, 1, 1), date(2025, 6, 30)
    checked = confirmed = 0
    for _, chart in simulate_caseload(5, 30, start, end):
        obs = []
        for e in chart.entries:
            if e.kind == Kind.TEMP:
                p = parse_entry(e.kind, e.raw, end, on=e.day.isoformat(), at=e.time, flags=e.flags)
                obs.append(Observation(p.day, p.kind, p.value, p.flags, p.time))
        for cycle in chart.truth:
            last = cycle.next_start if cycle.length is not None else end
            readings = valid_readings([o for o in obs if cycle.start <= o.day < last], protocol)
            rule = three_over_six(readings, protocol)
            engine = None if rule.confirmed_at is None else (rule.first_high, rule.confirmed_at)
            assert engine == literal(readings)
            checked += bool(readings)
            confirmed += engine is not None
    assert checked > 50 and confirmed > 10


RISING = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 15)}


def test_an_abrupt_rise_starts_on_the_first_high():
    shift = shift_of(LOWS | {14: 36.70, 15: 36.65, 16: 36.75, 17: 36.80})
    assert shift.rise_start == shift.first_high == on(14)


def test_a_gradual_rise_starts_where_the_level_changes():
    # Hilgers 1980 dates ovulation from the first day of the rise. Here it climbs over days 15-17
    # (WHO Global Handbook: the rise may be gradual) and only day 18 clears the six before it by
    # 0.2 C (coverline form); the change point's first high-level reading, day 16, is among those six.
    shift = shift_of(
        RISING | {15: 36.58, 16: 36.66, 17: 36.70, 18: 36.92, 19: 36.90, 20: 36.92, 21: 36.88}, protocol=COVER
    )
    assert shift.confirmed and shift.first_high == on(18)
    assert shift.change_point.split_on == on(16) and on(16) in shift.low_days
    assert shift.rise_start == on(16)


def test_a_change_point_alone_dates_the_rise_with_six_readings_before_it_and_three_after():
    # A ramp the coverline form never confirms (no reading clears the six before it by 0.2 C).
    ramp = RISING | {15: 36.52, 16: 36.60, 17: 36.68, 18: 36.70, 19: 36.75, 20: 36.70, 21: 36.75}
    shift = shift_of(ramp, protocol=COVER)
    assert not shift.confirmed and shift.change_point.passes
    assert shift.rise_start == shift.change_point.split_on == on(16)
    # Two highs only: too early to say the level changed.
    assert shift_of({d: t for d, t in ramp.items() if d <= 17}, protocol=COVER).rise_start is None
    # Five readings before the split: fewer than the rule's six lows.
    early = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 6)} | {d: 36.75 for d in range(6, 12)}
    assert shift_of(early, protocol=COVER).change_point.passes and shift_of(early, protocol=COVER).rise_start is None


def test_a_rise_after_a_logging_gap_is_not_dated():
    # The rule counts readings, so it confirms across a gap; but with days 15-21 unread the rise
    # may have begun on any of them, and the first reading after the gap is not its first day.
    shift = shift_of(RISING | {d: 36.80 for d in range(22, 30)})
    assert shift.confirmed and shift.first_high == on(22)
    assert shift.rise_start is None
    # One missed day before the first high still dates it.
    assert shift_of(RISING | {d: 36.80 for d in range(16, 24)}).rise_start == on(16)
