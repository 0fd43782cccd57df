"""Treatment alerts: serum hCG not rising as it should, too many mature follicles on a scan.

Each hCG pair and each scan day is its own finding. Findings of the current cycle are held until
a new cycle begins; only the latest pair or scan is news enough to raise.
"""

from __future__ import annotations

from caseload.core.alerts.base import AlertKind, Candidate, Facts, iso, source_of
from caseload.core.follicles import THESSALONIKI_RULE
from caseload.core.model import Severity
from caseload.core.pregnancy import HcgValue

FOLLICLE_SOURCE = (
    "Evans 2020 (more than 2 mature follicles under 40 years); or, by protocol, Thessaloniki ESHRE/ASRM "
    "consensus 2008 (from memory)"
)


def rise_per_48h(first: HcgValue, second: HcgValue) -> float:
    """Fractional rise scaled to 48 h, as a log-linear change between the two samples."""
    hours = (second.taken - first.taken).total_seconds() / 3600
    return round((second.iu_l / first.iu_l) ** (48 / hours) - 1, 4)


def hcg_rise_low(f: Facts) -> list[Candidate]:
    p, values = f.protocol, f.analysis.hcg
    found = []
    for index, (first, second) in enumerate(zip(values, values[1:])):
        hours = (second.taken - first.taken).total_seconds() / 3600
        if not p.hcg_pair_min_hours <= hours <= p.hcg_pair_max_hours:
            continue
        rise = rise_per_48h(first, second)
        if rise >= p.hcg_min_rise_48h:
            continue
        days = f"{first.taken.date().isoformat()} to {second.taken.date().isoformat()}"
        span = f"{first.iu_l:g} to {second.iu_l:g} IU/L from {days}"
        if rise < 0:
            message = f"Serum hCG falling: {span} ({rise:.0%} per 48 h): review today."
        else:
            minimum = f"minimum {p.hcg_min_rise_48h:.0%}"
            message = f"Serum hCG rising too slowly: {span} ({rise:.0%} per 48 h, {minimum}): review today."
        found.append(
            f.candidate(
                AlertKind.HCG_RISE_LOW,
                f"{first.taken.date().isoformat()}/{second.taken.date().isoformat()}",
                Severity.URGENT,
                message,
                {
                    "cycle_start": iso(f.analysis.cycle_start),
                    "first": {"taken": first.taken.isoformat(timespec="minutes"), "iu_l": first.iu_l},
                    "second": {"taken": second.taken.isoformat(timespec="minutes"), "iu_l": second.iu_l},
                    "hours": round(hours, 1),
                    "rise_48h": rise,
                    "minimum_48h": p.hcg_min_rise_48h,
                },
                f"Two serum hCG values {p.hcg_pair_min_hours}-{p.hcg_pair_max_hours} h apart rising less than "
                f"{p.hcg_min_rise_48h:.0%} per 48 h, or falling",
                source_of(p, ("hcg_min_rise_48h", "hcg_pair_min_hours", "hcg_pair_max_hours"),
                          "Barnhart 2004 (minimum 53% in 2 days); Morse 2012: 35%"),
                raisable=index == len(values) - 2,
            )
        )
    return found


def multiple_follicles(f: Facts) -> list[Candidate]:
    p, scans = f.protocol, f.analysis.follicles
    if scans is None:
        return []
    by_day = {s.day: s for s in scans.scans}  # a second scan the same day replaces the first
    last_day = max(by_day)
    found = []
    for day, scan in sorted(by_day.items()):
        if not scan.too_many:
            continue
        found.append(
            f.candidate(
                AlertKind.MULTIPLE_FOLLICLES,
                day.isoformat(),
                Severity.URGENT,
                f"{scan.mature_count} mature follicles ({p.mature_follicle_mm:g} mm or more, lead {scan.lead_mm:g} mm) on "
                f"the scan of {day.isoformat()}, more than {p.max_mature_follicles}: review before any trigger "
                "(risk of multiple pregnancy).",
                {
                    "cycle_start": iso(f.analysis.cycle_start),
                    "scan_day": day.isoformat(),
                    "mature_count": scan.mature_count,
                    "mature_mm": p.mature_follicle_mm,
                    "lead_mm": scan.lead_mm,
                    "allowed": p.max_mature_follicles,
                    "rule": "Thessaloniki 2008" if p.multiple_follicle_rule == THESSALONIKI_RULE else "Evans 2020",
                    "age": f.analysis.age_years,
                },
                f"More than {p.max_mature_follicles} follicles of {p.mature_follicle_mm:g} mm or more on a scan"
                if p.multiple_follicle_rule != THESSALONIKI_RULE
                else "More than 2 follicles of 16 mm or more, or one of 16 mm plus two of 14 mm, on a scan",
                source_of(p, ("max_mature_follicles", "mature_follicle_mm", "multiple_follicle_rule"), FOLLICLE_SOURCE),
                raisable=day == last_day,
            )
        )
    return found
