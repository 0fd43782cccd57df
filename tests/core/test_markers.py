"""Ovulation markers: LH surge, mucus peak, the estimate's order of trust, luteal length."""

from datetime import date, timedelta

import pytest

from caseload.core.markers import luteal_length, lh_surge, markers, mucus_peak
from caseload.core.model import Kind, Observation, Value
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.thermal import thermal_shift, valid_readings

DAY1 = date(2024, 5, 1)


def on(n: int) -> date:
    return DAY1 + timedelta(days=n - 1)


def lh(n: int, word: str | None = None, number: float | None = None) -> Observation:
    return Observation(on(n), Kind.LH, Value(word=word, number=number))


def mucus(n: int, word: str) -> Observation:
    return Observation(on(n), Kind.MUCUS, Value(word=word))


def test_the_surge_is_the_first_positive_test():
    obs = [lh(11, "negative"), lh(13, "positive"), lh(14, "positive")]
    assert lh_surge(obs, P) == on(13)


@pytest.mark.parametrize("iu_l, positive", [(24.9, False), (25.0, True)])
def test_a_numeric_lh_counts_from_the_protocol_threshold(iu_l, positive):
    # Common practice: 25 IU/L urinary LH read as a positive test.
    assert (lh_surge([lh(12, number=iu_l)], P) == on(12)) is positive


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


def _markers(obs: list[Observation]):
    shift = thermal_shift(valid_readings(obs), DAY1, on(20), P)
    return markers(obs, shift, P)


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


def test_luteal_length_counts_from_the_day_after_ovulation_to_the_day_before_the_period():
    # Lenton 1984 convention: ovulation on day 14, next period on day 29 -> days 15..28 = 14.
    assert luteal_length(on(14), on(29)) == 14
    assert luteal_length(None, on(29)) is None
    assert luteal_length(on(14), None) is None
