"""Pregnancy dating (Naegele's rule, ovulation + 266) and serial serum hCG."""

from datetime import date, datetime, timedelta

import pytest
from dateutil.relativedelta import relativedelta

from caseload.core.analysis import analyse
from caseload.presentation.json_shapes import analysis_json
from caseload.core.model import Kind, Observation, Patient, PatientStatus, Value
from caseload.core.pregnancy import HcgValue, episodes, from_ovulation, hcg_trend, naegele, pregnancy
from caseload.core.settings import DEFAULT_PROTOCOL as P
from caseload.core.settings import Protocol


def pregnant(obs, lmp, ovulation, by_status, today, protocol=P, usual=None):
    """The pregnancy as `analyse` builds it from the chart's latest episode."""
    found, _ = episodes(obs, PatientStatus.ACTIVE, None, protocol)
    return pregnancy(obs, lmp, ovulation, found[-1] if found else None, by_status, usual, (), today, protocol)


@pytest.mark.parametrize(
    "lmp",
    [date(2023, 12, 25), date(2023, 6, 1), date(2024, 2, 29), date(2023, 5, 24), date(2024, 3, 31), date(2022, 11, 30)],
)
def test_naegele_is_lmp_plus_280_days(lmp):
    # Naegele's rule, about 280 days (40 weeks); cross-checked with stdlib date arithmetic.
    assert naegele(lmp) == lmp + timedelta(days=280)


def test_naegele_across_a_year_end_and_a_leap_day():
    # 2023-12-25 + 280 days crosses 29 Feb 2024: 6 + 31 + 29 + 31 + 30 + 31 + 30 + 31 + 31 + 30 = 280.
    assert naegele(date(2023, 12, 25)) == date(2024, 9, 30)
    # The bedside form (+1 year -3 months +7 days, via dateutil) lands 2 days later here.
    assert date(2023, 12, 25) + relativedelta(years=1, months=-3, days=7) == date(2024, 10, 2)
    # Both agree where the months crossed add up (stdlib and dateutil cross-check).
    assert naegele(date(2023, 1, 1)) == date(2023, 1, 1) + relativedelta(years=1, months=-3, days=7)


def test_edd_from_ovulation_is_266_days():
    # ACOG Committee Opinion 700 (secondary): conception + 266 days.
    assert from_ovulation(date(2024, 1, 14)) == date(2024, 1, 14) + timedelta(days=266)


def serum(day: date, iu_l: float, at: str | None = None) -> Observation:
    return Observation(day, Kind.HCG, Value(number=iu_l), time=at)


def values(*pairs: tuple[float, float]) -> tuple[HcgValue, ...]:
    t0 = datetime(2024, 4, 1, 9, 0)
    return tuple(HcgValue(t0 + timedelta(hours=h), v) for h, v in pairs)


@pytest.mark.parametrize(
    "later, rise",
    # Barnhart 2004: minimum two-day rise 53%, median 124%, from two values 48 h apart.
    [(153.0, 0.53), (224.0, 1.24)],
)
def test_two_values_48_hours_apart(later, rise):
    trend = hcg_trend(values((0, 100.0), (48, later)), date(2024, 4, 3), P)
    assert trend.rise_48h == pytest.approx(rise, abs=1e-4)
    assert trend.below_minimum is False


def test_a_one_day_rise_of_24_percent_meets_the_two_day_minimum():
    # Barnhart 2004: 24% in 1 day compounds to 1.24^2 - 1 = 53.8% in 2 days, over the 53% minimum.
    trend = hcg_trend(values((0, 100.0), (24, 124.0)), date(2024, 4, 2), P)
    assert trend.rise_48h == pytest.approx(0.5376, abs=1e-4) and not trend.below_minimum


def test_doubling_every_48_hours_over_three_values():
    trend = hcg_trend(values((0, 100.0), (48, 200.0), (96, 400.0)), date(2024, 4, 5), P)
    assert trend.rise_48h == pytest.approx(1.0, abs=1e-4)
    assert trend.doubling_days == pytest.approx(2.0)


def test_below_minimum_depends_on_the_protocol_figure():
    # A 40% rise is below Barnhart 2004's 53% but above Morse 2012's 35%.
    pair = values((0, 100.0), (48, 140.0))
    assert hcg_trend(pair, date(2024, 4, 3), P).below_minimum
    assert not hcg_trend(pair, date(2024, 4, 3), Protocol(hcg_min_rise_48h=0.35)).below_minimum


def test_a_falling_value_has_a_negative_rise_and_no_doubling_time():
    trend = hcg_trend(values((0, 400.0), (48, 200.0)), date(2024, 4, 3), P)
    assert trend.rise_48h == pytest.approx(-0.5) and trend.doubling_days is None and trend.below_minimum


def test_the_fit_needs_two_distinct_days_within_the_window():
    assert hcg_trend(values((0, 100.0), (4, 110.0)), date(2024, 4, 1), P) is None
    # Protocol: 7 days; the value 8 days back falls out, leaving one.
    assert hcg_trend(values((0, 100.0), (8 * 24, 900.0)), date(2024, 4, 9), P) is None


def test_sample_times_are_used_for_the_interval():
    obs = [serum(date(2024, 4, 1), 100.0, "08:00"), serum(date(2024, 4, 3), 153.0, "08:00")]
    found = pregnant(obs, date(2024, 3, 1), None, False, date(2024, 4, 3), P)
    assert found.hcg_trend.rise_48h == pytest.approx(0.53, abs=1e-4)


def test_pregnancy_is_present_on_a_positive_test_or_the_status():
    lmp, today = date(2024, 3, 1), date(2024, 4, 12)
    assert pregnant([serum(today, 20.0)], lmp, None, False, today, P) is None
    # Common practice: serum hCG of 25 IU/L or more counts as positive.
    found = pregnant([serum(today, 25.0)], lmp, None, False, today, P)
    assert found.positive_test == today and found.edd_method == "naegele"
    assert found.edd == date(2024, 12, 6)
    assert found.gestational_age_days == 42 and found.gestational_age == "6w0d"
    urine = Observation(today, Kind.HCG, Value(word="positive"))
    assert pregnant([urine], lmp, None, False, today, P) is not None
    assert pregnant([], lmp, None, True, today, P).positive_test is None


def test_a_dated_ovulation_dates_the_pregnancy():
    today = date(2024, 4, 12)
    found = pregnant([], date(2024, 3, 1), date(2024, 3, 18), True, today, P)
    assert found.edd_method == "ovulation" and found.edd == date(2024, 3, 18) + timedelta(days=266)
    # Gestational age counts from two weeks before ovulation: 25 days + 14.
    assert found.gestational_age_days == 25 + 14


@pytest.mark.parametrize("usual, shift", [(32, 4), (35, 7), (24, -4), (28, 0)])
def test_naegele_is_adjusted_for_the_usual_cycle_length_when_regular(usual, shift):
    # Naegele's rule adjusted for cycle length, EDD = LMP + 280 + (usual - 28) (common practice):
    # ovulation comes (usual - 28) days later than on day 14. Reference arithmetic: stdlib timedelta.
    lmp, today = date(2024, 3, 1), date(2024, 4, 12)
    urine = Observation(today, Kind.HCG, Value(word="positive"))
    found = pregnant([urine], lmp, None, False, today, usual=usual)
    assert found.edd == lmp + timedelta(days=280 + shift)
    assert found.edd_method == ("naegele" if shift == 0 else "naegele-adjusted")
    assert found.gestational_age_days == 42 - shift  # dated from the adjusted EDD


@pytest.mark.parametrize("length, method", [(32, "naegele-adjusted"), (28, "naegele"), (None, "naegele")])
def test_show_json_names_the_due_date_rule(length, method):
    # Naegele's rule, adjusted only when cycles are regular (FIGO 2018 regularity); 6 cycles of
    # 24-36 days vary by 12 days (irregular at 34), so the plain rule applies.
    lengths = [length] * 6 if length else [24, 36, 26, 34, 28, 30]
    start, obs = date(2024, 1, 1), []
    for n in lengths:
        obs.append(Observation(start, Kind.BLEED, Value(word="moderate")))
        start += timedelta(days=n)
    obs += [Observation(start, Kind.BLEED, Value(word="moderate")),
            Observation(start + timedelta(days=30), Kind.HCG, Value(word="positive"))]
    who = Patient("P1", "A", date(1990, 1, 1), None)
    shown = analysis_json(analyse(who, obs, start + timedelta(days=31), P))["pregnancy"]
    assert shown["edd_method"] == method
    assert shown["edd"] == (start + timedelta(days=280 + ((length or 28) - 28))).isoformat()
