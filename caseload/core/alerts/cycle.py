"""Cycle alerts: the bleeding pattern (FIGO 2018), the luteal phase, and a period that does not come.

Findings about a completed cycle stay true, so they are held for every cycle that shows them (an
alert is resolved only by a correction that removes the finding, or by staff); only the latest
completed cycle's finding is news enough to raise.
"""

from __future__ import annotations

from datetime import date, timedelta

from caseload.core.alerts.base import AlertKind, Candidate, Facts, iso, source_of
from caseload.core.cycles import cycle_day
from caseload.core.figo import classify
from caseload.core.model import Kind, Severity
from caseload.core.stats import cycle_stats

FIGO = "FIGO 2018 (Munro 2018)"
FIGO_SETTINGS = ("figo_frequent_below", "figo_infrequent_above", "figo_variation_mid", "figo_variation_young_old")


def _figo_findings(f: Facts) -> list[str]:
    c, s, p = f.analysis.classification, f.analysis.stats, f.protocol
    found = []
    if c.frequency == "frequent":
        found.append(f"frequent (median cycle {s.median:g} days, normal from {p.figo_frequent_below})")
    if c.frequency == "infrequent":
        found.append(f"infrequent (median cycle {s.median:g} days, normal up to {p.figo_infrequent_above})")
    if c.regularity == "irregular":
        found.append(f"irregular (cycles vary by {s.variation} days, normal up to {c.variation_limit} at age {c.age_years})")
    return found


def _abnormal_since(f: Facts) -> date | None:
    """The day the current run of abnormal classifications began: the day after the completed cycle
    that first made the window frequent, infrequent or irregular, every later cycle keeping it so.
    The irregular-cycles episode: a run that ends and a later one that begins are two alerts."""
    p, age = f.protocol, f.analysis.classification.age_years
    complete = [r for r in f.analysis.cycles if not r.is_open and not r.pregnancy]
    since = None
    for k in range(len(complete), 0, -1):
        window = complete[:k][-p.stats_cycles :]
        c = classify(cycle_stats([r.length for r in window], [r.bleed_days for r in window]), None, False, age, p)
        if c.frequency not in ("frequent", "infrequent") and c.regularity != "irregular":
            break
        since = complete[k - 1].end + timedelta(days=1)
    return since


def irregular_cycles(f: Facts) -> list[Candidate]:
    """Keyed on the run of abnormal cycles it belongs to. Absent bleeding is the amenorrhoea alert's."""
    c, s, p = f.analysis.classification, f.analysis.stats, f.protocol
    findings = _figo_findings(f)
    if not findings:
        return []
    since = _abnormal_since(f) or f.analysis.cycles[-1].start
    return [
        f.candidate(
            AlertKind.IRREGULAR_CYCLES,
            since.isoformat(),
            Severity.SOON,
            f"FIGO 2018: cycles {'; '.join(findings)} over the last {s.count} cycles: refer.",
            {
                "frequency": c.frequency,
                "regularity": c.regularity,
                "cycles": s.count,
                "median": s.median,
                "shortest": s.shortest,
                "longest": s.longest,
                "variation": s.variation,
                "variation_limit": c.variation_limit,
                "age": c.age_years,
                "abnormal_since": since.isoformat(),
            },
            f"FIGO frequency outside {p.figo_frequent_below}-{p.figo_infrequent_above} days, or shortest-to-longest "
            f"variation above {p.figo_variation_mid} days (age 26-41; {p.figo_variation_young_old} at 18-25 and 42-45)",
            source_of(p, FIGO_SETTINGS, FIGO),
        )
    ]


def short_luteal_phase(f: Facts) -> list[Candidate]:
    p = f.protocol
    complete = [r for r in f.analysis.cycles if not r.is_open and not r.pregnancy]
    found = []
    for record in complete:
        days = record.luteal_length
        # A length outside the plausible range says the ovulation dating is wrong (ASRM 2021): it is
        # shown as a dating conflict, not reported as a short phase.
        if days is None or days > p.short_luteal_max_days or record.dating_conflict is not None:
            continue
        found.append(
            f.candidate(
                AlertKind.SHORT_LUTEAL_PHASE,
                record.start.isoformat(),
                Severity.SOON,
                f"Short luteal phase: {days} days in the cycle of {record.start.isoformat()} (ovulation "
                f"{record.markers.ovulation.isoformat()} by {record.markers.ovulation_method}): review.",
                {
                    "cycle_start": record.start.isoformat(),
                    "cycle_length": record.length,
                    "ovulation": record.markers.ovulation.isoformat(),
                    "ovulation_method": record.markers.ovulation_method,
                    "luteal_length": days,
                    "next_period": (record.end + timedelta(days=1)).isoformat(),
                },
                f"Luteal phase of {p.short_luteal_max_days} days or fewer in a completed cycle",
                source_of(p, ("short_luteal_max_days",), "ASRM 2021"),
                raisable=record is complete[-1],
            )
        )
    return found


def prolonged_bleeding(f: Facts) -> list[Candidate]:
    """A bleed longer than FIGO's normal, raised while it is the current or the last cycle's."""
    p, cycles = f.protocol, f.analysis.cycles
    found = []
    for index, record in enumerate(cycles):
        if record.bleed_days <= p.figo_prolonged_bleed_above:
            continue
        ongoing = record.is_open and record.bleed_end >= f.today - timedelta(days=1)
        found.append(
            f.candidate(
                AlertKind.PROLONGED_BLEEDING,
                record.start.isoformat(),
                Severity.TODAY,
                f"Prolonged bleeding: {record.bleed_days} days from {record.start.isoformat()}"
                f"{', still bleeding' if ongoing else ' to ' + record.bleed_end.isoformat()}: "
                f"FIGO 2018 normal is up to {p.figo_prolonged_bleed_above}; review.",
                {
                    "cycle_start": record.start.isoformat(),
                    "bleed_end": record.bleed_end.isoformat(),
                    "bleed_days": record.bleed_days,
                    "limit": p.figo_prolonged_bleed_above,
                },
                f"A bleed longer than {p.figo_prolonged_bleed_above} days",
                source_of(p, ("figo_prolonged_bleed_above",), FIGO),
                raisable=index >= len(cycles) - 2,
            )
        )
    return found


def intermenstrual_bleeding(f: Facts) -> list[Candidate]:
    """Bleeding between periods (flagged mid-cycle, or too soon after a day 1 to start a cycle) of
    at least the protocol's days, or its heavy days, in one cycle; the current or the last cycle's
    finding raises, older ones are held."""
    p, cycles = f.protocol, f.analysis.cycles
    found = []
    for index, record in enumerate(cycles):
        inside = [
            b for b in f.analysis.intermenstrual if record.start <= b.start and (record.end is None or b.start <= record.end)
        ]
        days, heavy = sum(b.flow_days for b in inside), sum(b.heavy_days for b in inside)
        if not inside or (days < p.intermenstrual_alert_days and heavy < p.intermenstrual_heavy_days):
            continue
        found.append(
            f.candidate(
                AlertKind.INTERMENSTRUAL_BLEEDING,
                record.start.isoformat(),
                Severity.SOON,
                f"Intermenstrual bleeding: {days} days ({heavy} heavy) between periods in the cycle of "
                f"{record.start.isoformat()}, from {inside[0].start.isoformat()}: FIGO 2018 abnormal bleeding "
                "symptom; review.",
                {
                    "cycle_start": record.start.isoformat(),
                    "bleeds": [
                        {"start": b.start.isoformat(), "end": b.end.isoformat(), "flow_days": b.flow_days,
                         "heavy_days": b.heavy_days}
                        for b in inside
                    ],
                    "flow_days": days,
                    "heavy_days": heavy,
                    "limit_days": p.intermenstrual_alert_days,
                    "limit_heavy_days": p.intermenstrual_heavy_days,
                },
                f"Bleeding between periods on {p.intermenstrual_alert_days} days or more, or heavy on "
                f"{p.intermenstrual_heavy_days} or more, in one cycle",
                source_of(p, ("intermenstrual_alert_days", "intermenstrual_heavy_days", "min_cycle_days"),
                          f"{FIGO}: intermenstrual bleeding; thresholds common practice"),
                raisable=index >= len(cycles) - 2,
            )
        )
    return found


def bleeding_now(f: Facts) -> bool:
    """Any bleeding logged today or yesterday."""
    return any(o.kind == Kind.BLEED and o.day >= f.today - timedelta(days=1) for o in f.observations if o.day <= f.today)


def period_overdue(f: Facts) -> list[Candidate]:
    """Past the next period's 90% upper bound; once a shift is confirmed, more days after its first
    high than a luteal phase lasts instead, since the shift, not her usual cycle, dates this one's
    end (ASRM 2021: luteal phase up to 17 days). No bleed yet. Never while she is bleeding: a bleed
    that runs on is prolonged-bleeding's, bleeding between periods intermenstrual-bleeding's."""
    current, forecast, p = f.analysis.current, f.analysis.prediction, f.protocol
    if current is None or forecast is None or bleeding_now(f):
        return []
    latest = forecast.next_period_range[1]
    shift = current.shift
    after_shift = shift.first_high + timedelta(days=p.overdue_after_shift_days) if shift.confirmed else None
    expected_by = after_shift or latest
    if f.today <= expected_by:
        return []
    return [
        f.candidate(
            AlertKind.PERIOD_OVERDUE,
            current.start.isoformat(),
            Severity.TODAY,
            f"Period overdue: expected by {expected_by.isoformat()}, no bleed logged (cycle day "
            f"{cycle_day(current.start, f.today)}): suggest a pregnancy test.",
            {
                "cycle_start": current.start.isoformat(),
                "cycle_day": cycle_day(current.start, f.today),
                "next_period": forecast.next_period.isoformat(),
                "next_period_latest": latest.isoformat(),
                "first_high": iso(shift.first_high) if shift.confirmed else None,
                "after_shift_limit": iso(after_shift),
                "days_late": (f.today - expected_by).days,
            },
            f"Today past the next period's 90% upper bound or, once a shift is confirmed, more than "
            f"{p.overdue_after_shift_days} days after its first high temperature, with no bleed",
            source_of(p, ("overdue_after_shift_days",), "common practice; luteal phase up to 17 days: ASRM 2021"),
        )
    ]


def amenorrhoea(f: Facts) -> list[Candidate]:
    current, last, p = f.analysis.current, f.analysis.last_bleed_day, f.protocol
    if current is None or last is None:
        return []
    days = (f.today - last).days
    if days < p.amenorrhoea_days:
        return []
    return [
        f.candidate(
            AlertKind.AMENORRHOEA,
            current.start.isoformat(),
            Severity.SOON,
            f"No bleed for {days} days (last bleeding day {last.isoformat()}): amenorrhoea; exclude pregnancy and review.",
            {
                "cycle_start": current.start.isoformat(),
                "last_bleed_day": last.isoformat(),
                "days_without_bleed": days,
                "limit": p.amenorrhoea_days,
                "last_entry_day": iso(f.analysis.last_entry_day),
            },
            f"{p.amenorrhoea_days} days or more without a bleed, not pregnant",
            source_of(p, ("amenorrhoea_days",), "FIGO 2018 absent bleeding (90 days from memory)"),
        )
    ]
