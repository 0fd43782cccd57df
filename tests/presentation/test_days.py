"""When an entry was recorded, said in the clinic's own time zone."""

from __future__ import annotations

from datetime import datetime, timezone

import pytest
from dateutil import tz

from caseload.presentation.days import logged_at


@pytest.mark.parametrize("utc, zone", [
    (datetime(2026, 7, 1, 8, 14, tzinfo=timezone.utc), "Europe/London"),    # summer time, UTC+1
    (datetime(2026, 12, 1, 8, 14, tzinfo=timezone.utc), "Europe/London"),   # winter, UTC+0
    (datetime(2026, 3, 29, 0, 59, tzinfo=timezone.utc), "Europe/London"),   # the minute before the change
    (datetime(2026, 12, 1, 23, 30, tzinfo=timezone.utc), "Australia/Sydney"),  # the next day there
])
def test_recorded_at_is_the_local_clock_time(utc, zone):
    # dateutil's tz database is the reference for the conversion.
    local = utc.astimezone(tz.gettz(zone))
    assert logged_at(utc, zone) == f"{local.day} {local:%b} {local:%H:%M}"


def test_examples_read_as_a_clerk_would_write_them():
    assert logged_at(datetime(2026, 7, 1, 8, 14, tzinfo=timezone.utc), "Europe/London") == "1 Jul 09:14"
    assert logged_at(datetime(2026, 12, 1, 23, 30, tzinfo=timezone.utc), "Australia/Sydney") == "2 Dec 10:30"
    assert logged_at(None, "Europe/London") == "-"
