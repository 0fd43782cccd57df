"""The one mapping from cycle day to screen column, used by the temperature plot and every marker row.

Every row of the chart is drawn from the same `DayColumns`: a label column, then each shown day
the same whole number of columns, the day's reading, mark and number all at the day's first
column. A day gets at least two columns (so that a two-character mark such as a scan's "18" fits);
a cycle with more days than that allows is shown a window of days at a time, and moving the window
moves the plot and the rows together.
"""

from __future__ import annotations

from dataclasses import dataclass

LABEL_WIDTH = 8  # "mucus   ", "  36.40┤": the row names and the temperature scale
RIGHT_MARGIN = 1  # room for the mark that says later days are hidden
MIN_DAY_WIDTH = 2


@dataclass(frozen=True)
class DayColumns:
    """Days `first`..`last` of a cycle of `days` days, `width` columns each, after the labels."""

    first: int
    shown: int
    width: int
    days: int

    @property
    def last(self) -> int:
        return self.first + self.shown - 1

    @property
    def earlier_hidden(self) -> bool:
        return self.first > 1

    @property
    def later_hidden(self) -> bool:
        return self.last < self.days

    def x(self, day: int) -> int:
        """Where cycle `day`'s first column is, or would be when the window is wider: for lines that
        run in from a day outside it."""
        return LABEL_WIDTH + (day - self.first) * self.width

    def column(self, day: int) -> int | None:
        """The first screen column of cycle `day`, or None when the day is outside the window."""
        return self.x(day) if self.first <= day <= self.last else None

    def starting(self, first: int) -> DayColumns:
        """The same columns with the window moved to start at `first` (kept inside the cycle)."""
        return DayColumns(max(1, min(first, self.days - self.shown + 1)), self.shown, self.width, self.days)

    def around(self, day: int) -> DayColumns:
        """The window from day 1 while `day` is well inside it, else the one with `day` two thirds
        of the way across: the days before it and a few after."""
        if day <= self.shown - self.shown // 4:
            return self.starting(1)
        return self.starting(day - (2 * self.shown) // 3)


def day_columns(total_width: int, days: int) -> DayColumns:
    """The columns of a `days`-day cycle in `total_width` screen columns, from day 1: the days share
    the room evenly when they fit at two columns or more, else as many as fit are shown."""
    days = max(1, days)
    room = max(total_width - LABEL_WIDTH - RIGHT_MARGIN, MIN_DAY_WIDTH)
    width = max(MIN_DAY_WIDTH, room // days)
    shown = max(1, min(days, room // width))
    return DayColumns(1, shown, width, days)
