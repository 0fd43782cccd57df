"""Temperature alerts: no shift when one was due, a cycle that ended without one, a rise that lasts.

Only for patients charting temperatures. The shift is the three-over-six rule's (Miolo 1993; Marshall 1968).
"""

from __future__ import annotations

from datetime import timedelta

from caseload.core.alerts.base import AlertKind, Candidate, Facts, iso, source_of
from caseload.core.cycles import cycle_day
from caseload.core.model import Severity
from caseload.core.thermal import ThermalShift

THERMAL_SOURCE = "common practice; three-over-six rule (Miolo 1993, WHO multicentre study; Marshall 1968)"


def flat(shift: ThermalShift) -> bool:
    """No rise by either method: neither the three-over-six rule nor the change-point estimate.

    A chart one of them reads as biphasic is uncertain, not evidence of a cycle without ovulation;
    calling it so would send nurses after cycles that ovulated.
    """
    return shift.agreement == "none"


def no_thermal_shift(f: Facts) -> list[Candidate]:
    """Past the expected ovulation's 80% upper bound plus a grace, well charted, still no shift.

    The bound is the pattern's alone: the forecast that has seen this cycle's empty days moves its
    range later day by day, so it would never fall behind. Once past the deadline the alert holds
    until a shift or a period, however the charting goes afterwards.
    """
    current, forecast, p = f.analysis.current, f.analysis.prediction, f.protocol
    if current is None or forecast is None or not flat(current.shift):
        return []
    latest = forecast.expected_ovulation_range[1]
    deadline = latest + timedelta(days=p.no_shift_grace_days)
    if f.today <= deadline:
        return []
    shift = current.shift
    coverage = shift.coverage or 0.0
    cd = cycle_day(current.start, f.today)
    return [
        f.candidate(
            AlertKind.NO_THERMAL_SHIFT,
            current.start.isoformat(),
            Severity.SOON,
            f"No thermal shift by cycle day {cd}: ovulation expected by {latest.isoformat()} "
            f"(cycle day {cycle_day(current.start, latest)}), {shift.readings} readings on {coverage:.0%} of days: "
            "review for an anovulatory cycle.",
            {
                "cycle_start": current.start.isoformat(),
                "cycle_day": cd,
                "expected_ovulation_by": latest.isoformat(),
                "deadline": deadline.isoformat(),
                "readings": shift.readings,
                "coverage": coverage,
                "lh_surge": iso(current.markers.lh_surge),
            },
            f"Cycle day past the 80% upper bound of expected ovulation + {p.no_shift_grace_days} days, valid readings "
            f"on at least {p.min_reading_coverage:.0%} of days since day 1, no shift by the three-over-six rule nor "
            "the change-point estimate",
            source_of(p, ("no_shift_grace_days", "min_reading_coverage"), THERMAL_SOURCE),
            raisable=coverage >= p.min_reading_coverage,
        )
    ]


def monophasic_cycle(f: Facts) -> list[Candidate]:
    """Completed cycles, well charted, that never showed a shift; the latest one is news."""
    p = f.protocol
    complete = [r for r in f.analysis.cycles if not r.is_open]
    found = []
    for record in complete:
        shift = record.shift
        coverage = shift.coverage or 0.0
        if not flat(shift) or coverage < p.min_reading_coverage:
            continue
        found.append(
            f.candidate(
                AlertKind.MONOPHASIC_CYCLE,
                record.start.isoformat(),
                Severity.SOON,
                f"Monophasic cycle: the cycle of {record.start.isoformat()} ({record.length} days) ended with no "
                f"thermal shift in {shift.readings} readings ({coverage:.0%} of days): likely anovulatory, review.",
                {
                    "cycle_start": record.start.isoformat(),
                    "cycle_length": record.length,
                    "readings": shift.readings,
                    "coverage": coverage,
                },
                f"A completed cycle with valid readings on at least {p.min_reading_coverage:.0%} of days and no shift by "
                "the three-over-six rule nor the change-point estimate",
                source_of(p, ("min_reading_coverage",), THERMAL_SOURCE),
                raisable=record is complete[-1],
            )
        )
    return found


def sustained_high_temps(f: Facts) -> list[Candidate]:
    """Readings above the coverline for longer than a luteal phase lasts: possibly pregnant.

    Held from the shift until the next period, so one low reading does not resolve it.
    """
    current, p = f.analysis.current, f.protocol
    if current is None or not current.shift.confirmed:
        return []
    shift = current.shift
    days = shift.days_above_coverline
    since = None if not days else shift.last_reading - timedelta(days=days - 1)
    return [
        f.candidate(
            AlertKind.SUSTAINED_HIGH_TEMPS,
            current.start.isoformat(),
            Severity.TODAY,
            f"Temperatures above the coverline ({shift.coverline:.2f} C) for {days} days since {iso(since)}: "
            "possible pregnancy, suggest a pregnancy test.",
            {
                "cycle_start": current.start.isoformat(),
                "coverline": shift.coverline,
                "days_above_coverline": days,
                "above_since": iso(since),
                "first_high": iso(shift.first_high),
                "confirmed_on": iso(shift.confirmed_on),
                "last_reading": iso(shift.last_reading),
            },
            f"Temperature above the coverline for {p.sustained_high_days} or more days",
            source_of(p, ("sustained_high_days",), "common practice (no published source: longer than the "
                      "17-day luteal maximum of ASRM 2021)"),
            raisable=days >= p.sustained_high_days,
        )
    ]
