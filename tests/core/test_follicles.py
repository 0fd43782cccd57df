"""Follicle tracking: lead, mature count, growth and the projected trigger-size day."""

from datetime import date, timedelta

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
