"""Follicle tracking: lead, mature count, growth and the projected trigger-size day."""

from dataclasses import replace
from datetime import date, timedelta

import numpy
import pytest

from caseload.core.follicles import follicles
from caseload.core.model import Kind, Observation, Scan, Value
from caseload.core.settings import DEFAULT_PROTOCOL as P

D = date(2024, 6, 10)


def scan(n: int, sizes: tuple[float, ...], endo: float | None = None) -> Observation:
    return Observation(D + timedelta(days=n), Kind.SCAN, Value(scan=Scan(sizes, endo)))


def test_lead_and_mature_count_at_the_evans_threshold():
    # Evans 2020: a mature follicle is 14 mm or more (13.9 is not).
    f = follicles([scan(0, (16.0, 14.0, 13.9, 9.0), 7.5)], P)
    assert f.lead_mm == 16.0 and f.mature_count == 2 and f.endometrium_mm == 7.5
    assert f.growth_mm_per_day is None and f.trigger_day is None


def test_growth_by_linear_fit_and_projected_trigger_day():
    # Lead 10, 12, 14 mm on days 0, 1, 2: 2 mm/day, reaching 18 mm (common practice) on day 4.
    f = follicles([scan(0, (10.0,)), scan(1, (12.0, 8.0), 6.0), scan(2, (14.0, 9.0))], P)
    assert f.growth_mm_per_day == pytest.approx(2.0)
    assert f.trigger_day == D + timedelta(days=4) and not f.trigger_reached
    assert f.endometrium_mm == 6.0


def test_uneven_scans_use_the_fit_not_the_last_two():
    # Days 0, 2, 3 with 11, 14, 15 mm: slope 1.357 mm/day; 18 mm at x = 2.33 + (18 - 13.33)/1.357 = 5.77.
    f = follicles([scan(0, (11.0,)), scan(2, (14.0,)), scan(3, (15.0,))], P)
    assert f.growth_mm_per_day == pytest.approx(1.36, abs=0.01)
    assert f.trigger_day == D + timedelta(days=6)


def test_a_lead_at_trigger_size_reports_the_day_it_got_there():
    f = follicles([scan(0, (15.0,)), scan(2, (18.5,)), scan(3, (20.0,))], P)
    assert f.trigger_reached and f.trigger_day == D + timedelta(days=2)


def test_no_scans_no_follicles():
    assert follicles([], P) is None


def med(n: int) -> Observation:
    return Observation(D + timedelta(days=n), Kind.MED, Value(word="letrozole 5 mg days 3-7"))


@pytest.mark.parametrize("cyst", [25.0, 28.5, 32.0])
def test_a_persistent_structure_of_25_mm_is_a_possible_cyst_not_the_lead(cyst):
    # A follicle grows 1-2 mm a day (common practice); a structure of 25 mm or more (from memory)
    # unchanged on scans days apart is a possible cyst: the lead is the growing follicle.
    f = follicles([scan(0, (cyst, 12.0)), scan(3, (cyst + 0.5, 15.0, 10.0)), scan(5, (cyst, 18.5, 11.0))], P)
    assert f.lead_mm == 18.5 and f.possible_cysts == (cyst,)
    assert f.mature_count == 1  # Evans 2020: 14 mm or more, the cyst left out
    # 12, 15, 18.5 mm on days 0, 3, 5: least-squares slope checked against numpy.polyfit.
    assert f.growth_mm_per_day == pytest.approx(numpy.polyfit([0, 3, 5], [12.0, 15.0, 18.5], 1)[0], abs=0.005)


def test_a_large_structure_that_grows_or_is_seen_once_stays_the_lead():
    assert follicles([scan(0, (26.0, 12.0))], P).lead_mm == 26.0
    grown = follicles([scan(0, (23.0,)), scan(2, (26.0,))], P)  # 1.5 mm a day: a follicle
    assert grown.lead_mm == 26.0 and grown.possible_cysts == ()


def test_growth_is_fitted_on_the_stimulation_scans_not_a_baseline():
    # A baseline scan on day 0 (lead 9 mm), tablets from day 2, monitoring scans on days 9, 11, 13:
    # 12, 14, 16 mm is 1 mm a day from the monitoring scans (1.0), not 0.55 from all four.
    obs = [scan(0, (9.0,)), med(2), scan(9, (12.0,)), scan(11, (14.0,)), scan(13, (16.0,))]
    f = follicles(obs, P)
    assert f.growth_mm_per_day == pytest.approx(1.0)
    assert f.trigger_day == D + timedelta(days=15)  # 18 mm (common practice) two days after 16 mm
    # Without a logged medication the week-long gap still sets the baseline apart.
    assert follicles([o for o in obs if o.kind == Kind.SCAN], P).growth_mm_per_day == pytest.approx(1.0)


@pytest.mark.parametrize(
    "sizes, evans, thessaloniki",
    [
        ((16.0, 14.0, 14.0), True, True),  # one of 16 plus two of 14
        ((15.5, 14.0, 14.0), True, False),  # three mature by Evans, none of 16
        ((17.0, 16.5, 16.0), True, True),  # more than 2 at 16
        ((18.0, 16.0, 13.5), False, False),
        ((18.0, 14.5), False, False),
    ],
)
def test_too_many_follicles_by_evans_or_thessaloniki(sizes, evans, thessaloniki):
    # Evans 2020: more than 2 follicles of 14 mm or more under 40; Thessaloniki ESHRE/ASRM 2008
    # (from memory): more than 2 of 16 mm or more, or one of 16 mm plus two of 14 mm.
    assert follicles([scan(0, sizes)], P).scans[0].too_many is evans
    assert follicles([scan(0, sizes)], replace(P, multiple_follicle_rule=2)).scans[0].too_many is thessaloniki
