"""The days a weekly summary covers: its week from Monday to the day it is prepared as of, or to
Sunday once that day is past.

A week in progress, or a view of an earlier day (`--today`), says "figures up to <day> only", so
nothing after that day may be counted: not the days still to come, nor what the store has learnt
since. Every figure takes its bounds from one `Period`, made by `covered` alone.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime

from caseload.application.week.iso_weeks import Week


@dataclass(frozen=True)
class Period:
    """A week's days from its Monday up to `last_day`, and the UTC instants that bound them."""

    week: Week
    last_day: date

    @property
    def first_day(self) -> date:
        return self.week.first_day

    @property
    def days(self) -> tuple[date, ...]:
        return self.week.days[: (self.last_day - self.week.first_day).days + 1]

    @property
    def day_starts(self) -> tuple[datetime, ...]:
        """UTC instants of local midnight, Monday to the midnight after `last_day`."""
        return self.week.day_starts[: len(self.days) + 1]

    @property
    def start(self) -> datetime:
        return self.week.start

    @property
    def end(self) -> datetime:
        """The first instant after the last day covered (exclusive bound)."""
        return self.day_starts[-1]

    def contains(self, instant: datetime) -> bool:
        return self.start <= instant < self.end

    def holds(self, day: date) -> bool:
        return self.first_day <= day <= self.last_day

    def local(self, instant: datetime) -> datetime:
        return self.week.local(instant)

    def local_day(self, instant: datetime) -> date:
        return self.week.local_day(instant)


def covered(week: Week, as_of: date) -> Period:
    """The last day a summary of `week` prepared as of `as_of` covers: the earlier of the two.
    (A week starting after `as_of` is refused before this is asked.)"""
    return Period(week, min(as_of, week.last_day))
