"""Ovulation markers: LH surge, mucus peak, the estimate's order of trust, luteal length."""

from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.analysis import analyse
from caseload.presentation.json_shapes import analysis_json
from caseload.core.markers import Markers, luteal_length, lh_surges, markers, mucus_peak
from caseload.core.model import Kind, Observation, Patient, Value
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.settings import Protocol
from caseload.core.thermal import COVERLINE_FORM, thermal_shift, valid_readings

DAY1 = date(2024, 5, 1)


def on(n: int) -> date:
    return DAY1 + timedelta(days=n - 1)


def lh(n: int, word: str | None = None, number: float | None = None) -> Observation:
    return Observation(on(n), Kind.LH, Value(word=word, number=number))


def mucus(n: int, word: str) -> Observation:
    return Observation(on(n), Kind.MUCUS, Value(word=word))


def test_the_surge_is_the_first_positive_test():
    obs = [lh(11, "negative"), lh(13, "positive"), lh(14, "positive")]
    assert lh_surges(obs, P) == [on(13)]


@pytest.mark.parametrize("iu_l, positive", [(24.9, False), (25.0, True)])
def test_a_numeric_lh_counts_from_the_protocol_threshold(iu_l, positive):
    # Common practice: 25 IU/L urinary LH read as a positive test.
    assert (lh_surges([lh(12, number=iu_l)], P) == [on(12)]) is positive


def test_mucus_peak_is_the_last_peak_type_day_confirmed_by_a_drier_one():
    obs = [mucus(9, "creamy"), mucus(11, "watery"), mucus(12, "stretchy"), mucus(13, "watery"), mucus(14, "sticky")]
    assert mucus_peak(obs) == on(13)


def test_an_unconfirmed_peak_is_no_peak():
    assert mucus_peak([mucus(10, "creamy"), mucus(12, "stretchy")]) is None


def test_a_later_unconfirmed_patch_leaves_the_confirmed_peak():
    obs = [mucus(12, "stretchy"), mucus(13, "dry"), mucus(20, "stretchy")]
    assert mucus_peak(obs) == on(12)


def _shift_chart() -> list[Observation]:
    lows = {8: 36.4, 9: 36.35, 10: 36.45, 11: 36.5, 12: 36.4, 13: 36.45}
    highs = {15: 36.75, 16: 36.8, 17: 36.8}
    return [Observation(on(d), Kind.TEMP, Value(number=t)) for d, t in (lows | highs).items()]


def _markers(obs: list[Observation], retrospective: bool = False, protocol: Protocol = P):
    shift = thermal_shift(valid_readings(obs, protocol), DAY1, on(20), protocol)
    return markers(obs, shift, protocol, retrospective)


def test_order_of_trust_lh_then_shift_then_mucus():
    temps, peak = _shift_chart(), [mucus(12, "stretchy"), mucus(13, "sticky")]
    # WHO Task Force 1980: ovulation about a day (median 32 h) after the LH rise.
    both = _markers(temps + peak + [lh(13, "positive")])
    assert (both.ovulation, both.ovulation_method) == (on(14), "lh")
    # Shift: the day before the first high (first high on day 15).
    shift = _markers(temps + peak)
    assert (shift.ovulation, shift.ovulation_method) == (on(14), "shift")
    alone = _markers(peak)
    assert (alone.ovulation, alone.ovulation_method, alone.mucus_peak) == (on(12), "mucus", on(12))
    assert _markers([]).ovulation is None and _markers([]).ovulation_method is None


def dated(ovulation: date | None, method: str | None, surge: date | None = None) -> Markers:
    return Markers(surge, None, ovulation, method)


def test_luteal_length_counts_from_the_day_after_ovulation_to_the_day_before_the_period():
    # Lenton 1984 convention: ovulation on day 14, next period on day 29 -> days 15..28 = 14.
    assert luteal_length(dated(on(14), "shift"), on(29)) == 14
    assert luteal_length(dated(None, None), on(29)) is None
    assert luteal_length(dated(on(14), "shift"), None) is None


@pytest.mark.parametrize(
    "surge, next_period, days",
    [
        (date(2024, 6, 8), date(2024, 6, 20), 11),  # bleed 26 May, LH positive 8 Jun, bleed 20 Jun
        (date(2024, 6, 7), date(2024, 6, 20), 12),
        (date(2024, 6, 9), date(2024, 6, 20), 10),
        (date(2024, 6, 8), date(2024, 6, 23), 14),
    ],
)
def test_short_luteal_phase_counts_from_the_day_after_the_lh_peak(surge, next_period, days):
    # Lenton 1984: the luteal phase runs from the day after the LH peak to the day before menses,
    # so 8 Jun peak, 20 Jun period -> 9..19 Jun = 11 days (not 10), whatever the surge-to-ovulation lag.
    chart = [
        Observation(date(2024, 5, 26), Kind.BLEED, Value(word="moderate")),
        Observation(surge, Kind.LH, Value(word="positive")),
        Observation(next_period, Kind.BLEED, Value(word="moderate")),
    ]
    first = analyse(Patient("P1", "A", date(1990, 1, 1), None), chart, next_period + timedelta(days=1), P).cycles[0]
    assert first.markers.ovulation == surge + timedelta(days=1) and first.luteal_length == days


def temps(values: dict[int, float]) -> list[Observation]:
    return [Observation(on(d), Kind.TEMP, Value(number=t)) for d, t in sorted(values.items())]


LOW = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 15)}
# A ramp the coverline form never confirms; the change point's high level starts on day 16.
COVER = replace(P, shift_rule=COVERLINE_FORM)
RAMP = LOW | {15: 36.52, 16: 36.60, 17: 36.68, 18: 36.70, 19: 36.75, 20: 36.70}


def test_a_change_point_dates_a_completed_cycle_the_rule_did_not_confirm():
    peak = [mucus(13, "stretchy"), mucus(14, "sticky")]
    done = _markers(temps(RAMP) + peak, retrospective=True, protocol=COVER)
    # The day before the first day of the rise, ahead of the mucus peak in the order of trust.
    assert (done.ovulation, done.ovulation_method) == (on(15), "change-point")
    # In the open cycle a later reading could still move the split: the mucus peak stands.
    still_open = _markers(temps(RAMP) + peak, protocol=COVER)
    assert (still_open.ovulation, still_open.ovulation_method) == (on(13), "mucus")
    assert _markers(temps(RAMP), retrospective=False, protocol=COVER).ovulation is None


def test_a_gradual_shift_dates_ovulation_from_the_first_day_of_the_rise():
    # Hilgers 1980: ovulation is dated from the first day of the rise, not from the rule's first
    # high (day 18 here); the level began to climb on day 16, so ovulation is put on day 15.
    gradual = LOW | {15: 36.58, 16: 36.66, 17: 36.70, 18: 36.92, 19: 36.90, 20: 36.92}
    found = _markers(temps(gradual), protocol=COVER)
    assert (found.ovulation, found.ovulation_method) == (on(15), "shift")


PATIENT = Patient("p", "Test Patient", date(1990, 6, 1), None)


def _gap_chart(extra: list[Observation]) -> list[Observation]:
    """A 30-day cycle (ovulation about day 15) with days 17-23 unlogged, then the next period."""
    bleeds = [Observation(on(d), Kind.BLEED, Value(word="moderate")) for d in (1, 2, 3, 4, 31, 32)]
    readings = {d: 36.40 + 0.05 * (d % 2) for d in range(1, 17)} | {d: 36.80 for d in range(24, 31)}
    return sorted(bleeds + temps(readings) + extra, key=lambda o: o.day)


def test_a_rise_hidden_by_a_logging_gap_gives_no_luteal_length():
    # Regression: the first reading after a week's gap confirmed the shift and dated ovulation to
    # day 23, measuring a 15-day luteal phase as 7 (and raising a false short luteal phase).
    cycle = analyse(PATIENT, _gap_chart([]), on(32)).cycles[0]
    assert cycle.shift.confirmed and cycle.shift.first_high == on(24)
    assert cycle.markers.ovulation is None and cycle.luteal_length is None
    # A mucus peak logged before the gap still dates it: days 16..30 are the luteal phase (Lenton 1984).
    dated = analyse(PATIENT, _gap_chart([mucus(15, "stretchy"), mucus(16, "sticky")]), on(32)).cycles[0]
    assert (dated.markers.ovulation_method, dated.luteal_length) == ("mucus", 15)


def test_show_json_names_the_change_point_method():
    # "change-point" is an added ovulation_method word of the `show --json` contract.
    ramp = RAMP | {d: 36.72 for d in range(21, 29)}
    bleeds = [Observation(on(d), Kind.BLEED, Value(word="moderate")) for d in (1, 2, 3, 29)]
    out = analysis_json(analyse(PATIENT, sorted(bleeds + temps(ramp), key=lambda o: o.day), on(29), COVER))
    first = out["cycles"][0]
    assert (first["ovulation"], first["ovulation_method"]) == (on(15).isoformat(), "change-point")
    # Lenton 1984: days 16..28 are the luteal phase.
    assert first["luteal_length"] == 13


def _cycle_with(extra: list[Observation], length: int = 33) -> list[Observation]:
    """A cycle of `length` days with lows to day 19 and highs from day 20, then the next period."""
    bleeds = [Observation(on(d), Kind.BLEED, Value(word="moderate")) for d in (1, 2, 3, length + 1)]
    readings = {d: 36.40 + 0.05 * (d % 2) for d in range(4, 20)} | {d: 36.80 for d in range(20, length + 1)}
    return sorted(bleeds + temps(readings) + extra, key=lambda o: o.day)


@pytest.mark.parametrize("early", [3, 5, 8])
def test_an_early_lh_positive_that_contradicts_the_shift_does_not_date_ovulation(early):
    # A positive on an early day and a clear shift from day 20: ovulation by the LH test would lie
    # more than 6 days before the rise (Hilgers 1980), so the shift dates it (day 19) and the
    # luteal phase is 14 days (Lenton 1984), not 27; the nurse is told of the conflict.
    record = analyse(PATIENT, _cycle_with([lh(early, "positive")]), on(34)).cycles[0]
    assert (record.markers.ovulation, record.markers.ovulation_method) == (on(19), "shift")
    assert record.luteal_length == 14 and record.dating_conflict is None
    assert "dating conflict" in record.markers.conflict and f"{20 - early} days before" in record.markers.conflict


def test_a_later_surge_that_fits_the_shift_wins_over_an_earlier_one():
    # Two surges (a negative between them): the one consistent with the shift dates ovulation
    # (WHO Task Force 1980: about a day after the surge).
    obs = [lh(5, "positive"), lh(6, "negative"), lh(18, "positive")]
    record = analyse(PATIENT, _cycle_with(obs), on(34)).cycles[0]
    assert (record.markers.lh_surge, record.markers.ovulation, record.markers.ovulation_method) == (on(18), on(19), "lh")
    assert "15 days before" in record.markers.conflict  # the day-5 positive, 15 days before the rise


@pytest.mark.parametrize("lh_day, dates", [(19, True), (21, True), (22, True), (23, False), (26, False)])
def test_a_surge_after_a_confirmed_rise_dates_ovulation_only_up_to_3_days_after_it(lh_day, dates):
    # Hilgers 1980: ovulation from 6 days before to 3 days after the first day of the rise (day 20).
    # A surge on day 22 puts ovulation on day 23, 3 days after it; one on day 23 on day 24, outside:
    # a confirmed shift is not noise, so the shift dates ovulation (day 19), the luteal phase is
    # 14 days (Lenton 1984), not a short one, and the nurse is told of the conflict.
    record = analyse(PATIENT, _cycle_with([lh(lh_day, "positive")]), on(34)).cycles[0]
    if dates:
        assert (record.markers.ovulation, record.markers.ovulation_method) == (on(lh_day + 1), "lh")
        assert record.markers.conflict is None
    else:
        assert (record.markers.ovulation, record.markers.ovulation_method) == (on(19), "shift")
        assert record.luteal_length == 14
        assert f"{lh_day - 20} days after the temperature rise" in record.markers.conflict


@pytest.mark.parametrize(
    "length, lh_day, conflict",
    [(33, 5, True), (40, 14, True), (30, 9, True), (30, 10, False), (28, 13, False), (20, 13, False), (20, 14, True)],
)
def test_a_luteal_phase_outside_7_to_20_days_is_a_dating_conflict_not_learnt(length, lh_day, conflict):
    # ASRM 2021: luteal phases are typically 11-17 days; one under 7 or over 20 says the dating is
    # wrong. Without temperatures the LH test dates ovulation alone (WHO Task Force 1980: a day later).
    bleeds = [Observation(on(d), Kind.BLEED, Value(word="moderate")) for d in (1, 2, 3, length + 1)]
    obs = sorted(bleeds + [lh(lh_day, "positive")], key=lambda o: o.day)
    a = analyse(PATIENT, obs, on(length + 2))
    record = a.cycles[0]
    # Lenton 1984: from the day after the LH peak to the day before the period.
    assert record.luteal_length == length - lh_day
    assert (record.dating_conflict is not None) is conflict
    # Not learnt: the forecast's luteal length stays the population's when the only one conflicts.
    assert (a.prediction.luteal_length.observed == 0) is conflict
    assert analysis_json(a)["cycles"][0]["dating_conflict"] == record.dating_conflict
