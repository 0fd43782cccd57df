"""Alerts on what is logged day by day: a gap in the logging, a fever reading."""

from __future__ import annotations

from datetime import date, timedelta

from caseload.core.alerts.base import AlertKind, Candidate, Facts, source_of
from caseload.core.cycles import cycle_day
from caseload.core.model import Kind, Observation, Severity


def _expected_fertile_days(f: Facts) -> tuple[date, date] | None:
    """The fertile days the pattern alone expects this cycle: six days before the earliest likely
    ovulation to the latest (Wilcox 1995), not moved by what this cycle has or has not shown."""
    forecast = f.analysis.prediction
    if forecast is None:
        return None
    first, last = forecast.expected_ovulation_range
    return first - timedelta(days=f.protocol.fertile_window_days - 1), last


def logging_gap(f: Facts) -> list[Candidate]:
    """Whole days with no entry of any kind inside a charted cycle; today is not over, so it does
    not count. Soon instead of info once the gap covers the expected fertile days while ovulation
    is not yet known to be past, since a gap there can cost the cycle's timing (common practice)."""
    current, last, p = f.analysis.current, f.analysis.last_entry_day, f.protocol
    if current is None or last is None:
        return []
    empty = (f.today - last).days - 1
    if empty < p.logging_gap_days:
        return []
    gap_start, gap_end = last + timedelta(days=1), f.today - timedelta(days=1)
    fertile = _expected_fertile_days(f)
    ovulated = current.markers.ovulation is not None and current.markers.ovulation < gap_start
    covers = fertile is not None and not ovulated and gap_start <= fertile[1] and gap_end >= fertile[0]
    message = f"No entry since {last.isoformat()} ({empty} whole days, cycle day {cycle_day(current.start, f.today)} today)"
    message += ", over her expected fertile days" if covers else ""
    return [
        f.candidate(
            AlertKind.LOGGING_GAP,
            gap_start.isoformat(),
            Severity.SOON if covers else Severity.INFO,
            message + ": call the patient to check in.",
            {
                "cycle_start": current.start.isoformat(),
                "last_entry_day": last.isoformat(),
                "gap_start": gap_start.isoformat(),
                "whole_days": empty,
                "expected_fertile_days": None if fertile is None else [fertile[0].isoformat(), fertile[1].isoformat()],
            },
            f"No entry for {p.logging_gap_days} whole days inside a charted cycle; soon when the gap covers the "
            "expected fertile days",
            source_of(p, ("logging_gap_days",), "common practice"),
        )
    ]


def _fevers(observations: list[Observation], threshold: float, today: date) -> dict[date, Observation]:
    """The highest reading at or above the threshold on each day."""
    found: dict[date, Observation] = {}
    temp = Kind.TEMP
    for obs in observations:
        if obs.kind is not temp:
            continue
        c = obs.value.number
        if c is not None and c >= threshold and obs.day <= today:
            if obs.day not in found or c > found[obs.day].value.number:
                found[obs.day] = obs
    return found


def fever(f: Facts) -> list[Candidate]:
    """Every reading of a fever, disturbed or not (an ill patient's reading is usually flagged);
    one a day. Older than the look-back it is history, held but not raised.

    The fever reading itself is already left out of the shift rules (thermal.excluded_readings), so
    the nurse is not asked to flag it; an illness also lifts the readings of the days around the
    fever that stay under the threshold (common practice), and only a flag leaves those out."""
    p = f.protocol
    recent_from = f.today - timedelta(days=p.alert_lookback_days)
    found = []
    for day, obs in sorted(_fevers(f.observations, p.fever_c, f.today).items()):
        found.append(
            f.candidate(
                AlertKind.FEVER,
                day.isoformat(),
                Severity.TODAY,
                f"Fever: {obs.value.number:.2f} C on {day.isoformat()}, already left out of the shift rules: ask "
                "about illness, and flag as illness her other readings taken while unwell.",
                {"day": day.isoformat(), "celsius": obs.value.number, "threshold_c": p.fever_c, "flags": list(obs.flags)},
                f"A temperature reading of {p.fever_c:g} C or more",
                source_of(p, ("fever_c",), "common practice"),
                raisable=day >= recent_from,
            )
        )
    return found
