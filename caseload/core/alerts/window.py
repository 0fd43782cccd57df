"""Window alerts: the fertile window is coming, or it is open now.

Both read the current cycle's forecast: P(fertile) on each coming day is the chance that ovulation
falls within the next six days (Wilcox 1995). An alert raised this cycle is held while the window
lasts, so a probability that dips and recovers does not resolve it and then bar it for the cycle.
"Approaching" means the chance is still rising: its peak lies ahead.
"""

from __future__ import annotations

from datetime import timedelta

from caseload.core.alerts.base import AlertKind, Candidate, Facts, iso, source_of
from caseload.core.cycles import cycle_day
from caseload.core.markers import fertile_until
from caseload.core.model import Plan, Severity
from caseload.core.prediction import Prediction
from caseload.core.settings import Protocol

WINDOW_SOURCE = "common practice; six-day window: Wilcox 1995"

APPROACHING_ACTION = {
    Plan.NATURAL: "let the patient know her fertile days are coming",
    Plan.TIMED: "plan timed intercourse with the couple",
    Plan.OVULATION_INDUCTION: "book the monitoring scan",
    Plan.INSEMINATION: "plan the insemination slot",
}
OPEN_ACTION = {
    Plan.NATURAL: "let the patient know",
    Plan.TIMED: "advise intercourse today and tomorrow",
    Plan.OVULATION_INDUCTION: "check the scan and the trigger plan",
    Plan.INSEMINATION: "book the insemination",
}


def p_today(prediction: Prediction) -> float:
    return prediction.daily[0].p_fertile if prediction.daily else 0.0


def open_threshold(prediction: Prediction, protocol: Protocol) -> float:
    """P(fertile) today that opens the window: `window_open_p`, or on a flat curve (a new or
    irregular patient, whose peak never reaches it) the top of her own curve, within
    `window_open_share_of_peak` of its peak, so the alert works for every patient."""
    return min(protocol.window_open_p, protocol.window_open_share_of_peak * prediction.peak_p_fertile)


def marker_window_open(f: Facts) -> bool:
    """An LH surge or a mucus peak this cycle and no confirmed shift yet, up to the last fertile day
    they show (the day after the ovulation the surge dates; the third day after the mucus peak). The
    shift may confirm late or never (no temperatures, a slow rise), and the fertile time does not
    wait for it."""
    current = f.analysis.current
    until = fertile_until(current.markers, f.protocol)
    return until is not None and not current.shift.confirmed and f.today <= until


def window_open(f: Facts) -> list[Candidate]:
    current, forecast, p = f.analysis.current, f.analysis.prediction, f.protocol
    if current is None or forecast is None or current.shift.confirmed:
        return []
    chance, marked, threshold = p_today(forecast), marker_window_open(f), open_threshold(forecast, p)
    raisable = chance >= threshold or marked
    # Held through a dip to the approaching level, until the latest day the pattern expects ovulation.
    held = chance >= p.window_approaching_p and f.today <= forecast.expected_ovulation_range[1]
    if not (raisable or held):
        return []
    cd = cycle_day(current.start, f.today)
    action = OPEN_ACTION[f.patient.plan]
    if marked:
        signs = [f"LH surge on {current.markers.lh_surge.isoformat()}"] if current.markers.lh_surge else []
        if current.markers.mucus_peak is not None:
            signs.append(f"mucus peak on {current.markers.mucus_peak.isoformat()}")
        message = f"Fertile window open: {' and '.join(signs)}, no shift yet (cycle day {cd}); {action}."
    else:
        message = f"Fertile window open: P(fertile) today {chance:.0%} (cycle day {cd}); {action}."
    window = forecast.fertile_window
    return [
        f.candidate(
            AlertKind.WINDOW_OPEN,
            current.start.isoformat(),
            Severity.TODAY,
            message,
            {
                "cycle_start": current.start.isoformat(),
                "cycle_day": cd,
                "p_fertile_today": chance,
                "open_threshold": round(threshold, 4),
                "lh_surge": iso(current.markers.lh_surge),
                "mucus_peak": iso(current.markers.mucus_peak),
                "ovulation": iso(forecast.ovulation),
                "fertile_window": None if window is None else [window[0].isoformat(), window[1].isoformat()],
            },
            f"P(fertile) today at least {p.window_open_p:g} (on a flat curve, {p.window_open_share_of_peak:g} of its "
            "peak), or an LH surge or mucus peak this cycle with no confirmed shift (to the third day after the peak)",
            source_of(
                p, ("window_open_p", "window_open_share_of_peak"), WINDOW_SOURCE + "; LH to ovulation: WHO Task Force 1980; mucus peak + 3 days: common practice"
            ),
            raisable=raisable,
        )
    ]


def window_approaching(f: Facts) -> list[Candidate]:
    current, forecast, p = f.analysis.current, f.analysis.prediction, f.protocol
    if current is None or forecast is None or current.shift.confirmed or current.markers.lh_surge is not None:
        return []
    if not forecast.daily or p_today(forecast) >= open_threshold(forecast, p):
        return []  # no forecast of the coming days, or open rather than approaching
    peak = max(forecast.daily, key=lambda d: d.p_fertile)
    reaching = [d for d in forecast.daily if d.p_fertile >= p.window_approaching_p]
    if not reaching or peak.day <= f.today:
        return []  # no window ahead: it has not come into view, or it is behind her
    first = reaching[0]
    raisable = first.day <= f.today + timedelta(days=p.window_approaching_days)
    cd = cycle_day(current.start, first.day)
    return [
        f.candidate(
            AlertKind.WINDOW_APPROACHING,
            current.start.isoformat(),
            Severity.SOON,
            f"Fertile window approaching: P(fertile) reaches {first.p_fertile:.0%} on {first.day.isoformat()} "
            f"(cycle day {cd}); {APPROACHING_ACTION[f.patient.plan]}.",
            {
                "cycle_start": current.start.isoformat(),
                "cycle_day": cycle_day(current.start, f.today),
                "reaches_on": first.day.isoformat(),
                "p_fertile": first.p_fertile,
                "p_fertile_today": p_today(forecast),
                "ovulation": iso(forecast.ovulation),
            },
            f"P(fertile) reaches {p.window_approaching_p:g} within the next {p.window_approaching_days} days",
            source_of(p, ("window_approaching_p", "window_approaching_days"), WINDOW_SOURCE),
            due=first.day,
            raisable=raisable,
        )
    ]
