"""Days as people read them, one format per use: a short day for columns, a long one for headings."""

from __future__ import annotations

from datetime import date, datetime
from zoneinfo import ZoneInfo


def short_day(day: date | None) -> str:
    """'1 Dec' style: unambiguous in every locale and short enough for a column."""
    return "-" if day is None else f"{day.day} {day.strftime('%b')}"


def long_day(day: date) -> str:
    return f"{day.strftime('%a')} {day.day} {day.strftime('%b %Y')}"


def day_span(pair: tuple[date, date] | None) -> str:
    return "-" if pair is None else f"{short_day(pair[0])} to {short_day(pair[1])}"


def iso_day(day: date | None) -> str:
    """A day for scripts, plain listings and papers: YYYY-MM-DD, or '-' when there is none."""
    return "-" if day is None else day.isoformat()


def iso_span(pair: tuple[date, date] | None) -> str:
    return "-" if pair is None else f"{iso_day(pair[0])} to {iso_day(pair[1])}"


def iso_minute(moment: datetime) -> str:
    """A moment on paper: YYYY-MM-DD HH:MM, in the moment's own local time."""
    return moment.strftime("%Y-%m-%d %H:%M")


def logged_at(at: datetime | None, zone: str) -> str:
    """When something was recorded, in the clinic's time zone: '1 Dec 09:14'."""
    if at is None:
        return "-"
    local = at.astimezone(ZoneInfo(zone)) if at.tzinfo else at
    return f"{short_day(local.date())} {local.strftime('%H:%M')}"
