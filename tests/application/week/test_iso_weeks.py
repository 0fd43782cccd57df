"""ISO weeks in the clinic's zone, checked against the standard library.

Reference: Python's `date.fromisocalendar()` / `date.isocalendar()` (ISO 8601 week dates) and the
`zoneinfo` tz database for the UTC instants of local midnights.
"""

from __future__ import annotations

from datetime import UTC, date, datetime, timedelta
from zoneinfo import ZoneInfo

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from caseload.core.parse import InputError
from caseload.application.week.iso_weeks import iso_week, parse_week


def _reference_weeks(year: int) -> int:
    return date(year, 12, 28).isocalendar().week


@pytest.mark.parametrize("year", range(2015, 2036))
def test_every_week_of_twenty_years_matches_the_standard_library(year):
    # Reference: date.fromisocalendar / date.isocalendar (stdlib, ISO 8601).
    for number in range(1, _reference_weeks(year) + 1):
        week = iso_week(f"{year}-W{number:02d}", "UTC")
        assert week.first_day == date.fromisocalendar(year, number, 1)
        assert week.last_day == date.fromisocalendar(year, number, 7)
        assert [day.isocalendar()[:2] for day in week.days] == [(year, number)] * 7


@pytest.mark.parametrize(
    "label, zone, hours",
    [
        ("2026-W43", "Europe/London", 169),  # clocks go back on Sunday 25 October 2026
        ("2026-W13", "Europe/London", 167),  # clocks go forward on Sunday 29 March 2026
        ("2026-W44", "Europe/London", 168),  # crosses the end of October, no change
        ("2026-W10", "America/New_York", 167),  # forward on Sunday 8 March 2026
        ("2026-W44", "America/New_York", 169),  # back on Sunday 1 November 2026
        ("2026-W43", "Asia/Tokyo", 168),  # no daylight saving
    ],
)
def test_week_bounds_are_local_midnights_as_utc_instants(label, zone, hours):
    week = iso_week(label, zone)
    tz = ZoneInfo(zone)
    # Reference: zoneinfo gives the UTC instant of each local midnight.
    midnights = [datetime.combine(week.first_day + timedelta(days=i), datetime.min.time(), tz).astimezone(UTC)
                 for i in range(8)]
    assert list(week.day_starts) == midnights
    assert week.hours == hours == (midnights[-1] - midnights[0]) / timedelta(hours=1)


def test_the_week_the_clocks_go_back_in_london():
    week = iso_week("2026-W43", "Europe/London")
    assert week.start == datetime(2026, 10, 18, 23, 0, tzinfo=UTC)  # Monday 00:00 BST
    assert week.end == datetime(2026, 10, 26, 0, 0, tzinfo=UTC)  # Monday 00:00 GMT
    # Monday 00:30 BST is Sunday 23:30 in UTC: inside the week; Sunday 23:30 BST the week before is not.
    assert week.contains(datetime(2026, 10, 18, 23, 30, tzinfo=UTC))
    assert not week.contains(datetime(2026, 10, 18, 22, 30, tzinfo=UTC))
    assert week.local_day(datetime(2026, 10, 18, 23, 30, tzinfo=UTC)) == date(2026, 10, 19)
    assert week.contains(datetime(2026, 10, 25, 23, 30, tzinfo=UTC))  # Sunday 23:30 GMT
    assert not week.contains(week.end)


@pytest.mark.parametrize("text", ["2026-w43", " 2026-W43 "])
def test_week_text_is_forgiving_about_case_and_spaces(text):
    assert parse_week(text) == (2026, 43)


@pytest.mark.parametrize(
    "text, words",
    [
        ("2026-48", "use YYYY-Www"),
        ("2026W48", "use YYYY-Www"),
        ("26-W48", "use YYYY-Www"),
        ("2026-W4", "use YYYY-Www"),
        ("", "use YYYY-Www"),
        ("2026-W00", "2026 has ISO weeks W01 to W53"),
        ("2026-W54", "2026 has ISO weeks W01 to W53"),
        ("2025-W53", "2025 has ISO weeks W01 to W52"),  # 2025 ends on a Wednesday: 52 weeks
        ("0000-W01", "years run from 0001 to 9999"),  # the Gregorian calendar of `date` has no year 0
        ("2026-W4\uff18", "use YYYY-Www"),  # a full-width 8: int() reads it, the week is typed in ASCII
        ("\u0662\u0660\u0662\u0666-W48", "use YYYY-Www"),  # Arabic-Indic digits
        ("2026-W48\n2026-W49", "use YYYY-Www"),
    ],
)
def test_bad_weeks_are_refused_in_one_line(text, words):
    with pytest.raises(InputError) as refused:
        parse_week(text)
    assert words in str(refused.value)
    assert "\n" not in str(refused.value)


ASCII_WEEKS = st.from_regex(r"[ ]?[0-9]{4}-[wW][0-9]{2}[ ]?", fullmatch=True)


@settings(max_examples=500)
@given(st.one_of(st.text(max_size=12), ASCII_WEEKS, ASCII_WEEKS.map(lambda w: w.replace("1", "\uff11"))))
def test_any_text_is_a_real_iso_week_or_one_refusal(text):
    try:
        year, number = parse_week(text)
    except InputError as refused:
        assert "\n" not in str(refused)
        return
    # Reference: date.fromisocalendar (stdlib, ISO 8601) holds every week parse_week accepts.
    monday = date.fromisocalendar(year, number, 1)
    assert monday.isocalendar()[:2] == (year, number)
    assert text.strip().upper() == f"{year:04d}-W{number:02d}"


def test_the_calendars_last_week_is_named_and_refused_once_its_days_are_needed():
    # 9999-W52 runs from Monday 27 December 9999 into year 10000: its Monday is enough to refuse it as
    # not yet begun (weekly_summary); were it begun, its Sunday is past the last day a date holds.
    week = iso_week("9999-W52", "Europe/London")
    assert week.first_day == date(9999, 12, 27) == date.fromisocalendar(9999, 52, 1)
    for read in (lambda: week.last_day, lambda: week.day_starts, lambda: week.days):
        with pytest.raises(InputError, match="^week 9999-W52 runs past the dates caseload can count"):
            read()


def test_the_first_week_east_of_greenwich_starts_before_the_first_instant_in_utc():
    week = iso_week("0001-W01", "Asia/Tokyo")  # midnight of 1 January year 1 there is in year 0 in UTC
    with pytest.raises(InputError, match="^week 0001-W01 runs past the dates caseload can count"):
        week.start


def test_an_unknown_time_zone_is_refused():
    with pytest.raises(InputError, match="time zone 'Mars/Olympus' is not known"):
        iso_week("2026-W43", "Mars/Olympus")
