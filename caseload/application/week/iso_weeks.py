"""ISO weeks in the clinic's time zone: Monday 00:00 to the next Monday 00:00, local time.

Stored timestamps are instants (UTC or with their offset), so a week is compared as two UTC
instants. A week that contains a daylight-saving change lasts 167 or 169 hours, not 168.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import UTC, date, datetime, timedelta
from functools import cached_property
from zoneinfo import ZoneInfo

import pendulum

from caseload.core.parse import InputError, one_line

# ASCII digits only: \d would also take other scripts' digits (a full-width ８), which int() reads.
WEEK_PATTERN = re.compile(r"([0-9]{4})-W([0-9]{2})")
FIRST_YEAR, LAST_YEAR = date.min.year, date.max.year
DAYS = 7


@dataclass(frozen=True)
class Week:
    """One ISO week with its local days and the UTC instants that bound it."""

    year: int
    number: int
    timezone: str
    first_day: date  # Monday

    @property
    def label(self) -> str:
        return f"{self.year:04d}-W{self.number:02d}"

    # The Sunday and the midnights are worked out when first read, not when the week is named: the
    # last week of year 9999 ends past the last day a date can hold, and is refused as not yet begun
    # (its Monday is after today) before they are needed.
    @property
    def last_day(self) -> date:  # Sunday
        return self._day(DAYS - 1)

    @cached_property
    def day_starts(self) -> tuple[datetime, ...]:
        """UTC instants of local midnight, Monday to the next Monday (8)."""
        zone = pendulum.timezone(self.timezone)
        days = [self._day(i) for i in range(DAYS + 1)]
        try:
            return tuple(_utc(pendulum.datetime(d.year, d.month, d.day, tz=zone)) for d in days)
        except (OverflowError, ValueError):  # 0001-W01 east of Greenwich: its first midnight is in year 0 in UTC
            raise self._beyond_the_calendar() from None

    def _day(self, offset: int) -> date:
        try:
            return self.first_day + timedelta(days=offset)
        except OverflowError:
            raise self._beyond_the_calendar() from None

    def _beyond_the_calendar(self) -> InputError:
        return InputError(f"week {self.label} runs past the dates caseload can count ({date.min.isoformat()} to "
                          f"{date.max.isoformat()} in UTC): choose a week well inside them")

    @property
    def start(self) -> datetime:
        return self.day_starts[0]

    @property
    def end(self) -> datetime:
        """The first instant after the week (exclusive bound)."""
        return self.day_starts[-1]

    @property
    def hours(self) -> int:
        return round((self.end - self.start).total_seconds() / 3600)

    @property
    def days(self) -> tuple[date, ...]:
        return tuple(self._day(i) for i in range(DAYS))

    def contains(self, instant: datetime) -> bool:
        return self.start <= instant < self.end

    def local(self, instant: datetime) -> datetime:
        """The instant on the clinic's wall clock (aware, in the clinic's zone)."""
        return instant.astimezone(ZoneInfo(self.timezone))

    def local_day(self, instant: datetime) -> date:
        return self.local(instant).date()


def weeks_in_year(year: int) -> int:
    """52 or 53: 28 December always falls in the year's last ISO week."""
    return pendulum.Date(year, 12, 28).week_of_year


def _utc(moment: pendulum.DateTime) -> datetime:
    return datetime.fromtimestamp(moment.timestamp(), UTC)


def parse_week(text: str) -> tuple[int, int]:
    """(year, week number) from 'YYYY-Www', or a one-line InputError."""
    found = WEEK_PATTERN.fullmatch(text.strip().upper())
    if not found:
        raise InputError(f"week '{one_line(text)}' not understood: use YYYY-Www, e.g. 2026-W48")
    year, number = int(found[1]), int(found[2])
    if year < FIRST_YEAR:
        raise InputError(f"week '{one_line(text)}' does not exist: years run from {FIRST_YEAR:04d} to {LAST_YEAR}")
    last = weeks_in_year(year)
    if not 1 <= number <= last:
        raise InputError(f"week '{one_line(text)}' does not exist: {year} has ISO weeks W01 to W{last}")
    return year, number


def iso_week(text: str, timezone: str) -> Week:
    """The week named by `text` ('2026-W48') in the clinic's time zone."""
    year, number = parse_week(text)
    try:  # checked as the week is named; its midnights are worked out when first read
        pendulum.timezone(timezone)
    except Exception:
        raise InputError(f"time zone '{one_line(timezone)}' is not known: use a name such as Europe/London") from None
    # ISO week 1 is the week that holds 4 January.
    monday = pendulum.Date(year, 1, 4).start_of("week").add(weeks=number - 1)
    return Week(year=year, number=number, timezone=timezone, first_day=date(monday.year, monday.month, monday.day))
