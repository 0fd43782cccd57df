"""Treatment alerts: serum hCG not rising as it should, bleeding in pregnancy, too many mature
follicles on a scan.

Each hCG pair, each bleed in pregnancy and each scan day is its own finding. Findings of the
current cycle (or pregnancy) are held until a new cycle begins; a bleed in pregnancy begins none.
"""

from __future__ import annotations

from collections import Counter

from caseload.core.alerts.base import AlertKind, Candidate, Facts, iso, source_of
from caseload.core.follicles import THESSALONIKI_RULE
from caseload.core.model import Severity
from caseload.core.pregnancy import HcgValue, abnormal_pairs

FOLLICLE_SOURCE = (
    "Evans 2020 (more than 2 mature follicles under 40 years); or, by protocol, Thessaloniki ESHRE/ASRM "
    "consensus 2008 (from memory)"
)


HCG_SOURCE = "Barnhart 2004 (minimum 24% in 1 day, 53% in 2 days); Morse 2012: 35%"
HCG_SETTINGS = ("hcg_min_rise_48h", "hcg_pair_min_hours")


def last_cycle_start(f: Facts) -> str | None:
    """Day 1 of the last cycle: the pregnancy's LMP, kept after the pregnancy ends until a period."""
    return iso(f.analysis.cycles[-1].start) if f.analysis.cycles else None


def _hcg_json(value: HcgValue) -> dict:
    return {"taken": value.taken.isoformat(timespec="minutes"), "iu_l": value.iu_l}


def _sample_names(values: tuple[HcgValue, ...]) -> dict[int, str]:
    """Each sample by its time, and by its place among samples of the same time (two results of one
    day logged without times): never by its value, which a key must not show."""
    names, seen = {}, Counter()
    for value in values:
        seen[value.taken] += 1
        name = value.taken.isoformat(timespec="minutes")
        names[id(value)] = name if seen[value.taken] == 1 else f"{name}#{seen[value.taken]}"
    return names


def hcg_rise_low(f: Facts) -> list[Candidate]:
    """Every abnormal pair of the cycle's (or the pregnancy's) serum values is raised: a lab batch
    entered at once raises for each pair that fails, not only the last."""
    p = f.protocol
    found = []
    names = _sample_names(f.analysis.hcg)
    for pair in abnormal_pairs(f.analysis.hcg, p):
        first, second, rise = pair.first, pair.second, pair.rise_48h
        days = f"{first.taken.date().isoformat()} to {second.taken.date().isoformat()}"
        span = f"{first.iu_l:g} to {second.iu_l:g} IU/L from {days}, {pair.hours:g} h"
        if rise is None:
            message = (f"Serum hCG falling: {first.iu_l:g} to {second.iu_l:g} IU/L on {second.taken.date().isoformat()}, "
                       "logged in that order with no time between them: review today.")
        elif pair.falling:
            message = f"Serum hCG falling: {span} ({rise:.0%} per 48 h): review today."
        else:
            minimum = f"minimum {p.hcg_min_rise_48h:.0%}"
            message = f"Serum hCG rising too slowly: {span} ({rise:.0%} per 48 h, {minimum}): review today."
        found.append(
            f.candidate(
                AlertKind.HCG_RISE_LOW,
                # The two samples, not their days: pairs over the same two days stay apart.
                f"{names[id(first)]}/{names[id(second)]}",
                Severity.URGENT,
                message,
                {
                    "cycle_start": last_cycle_start(f),
                    "first": _hcg_json(first),
                    "second": _hcg_json(second),
                    "hours": pair.hours,
                    "rise_48h": rise,
                    "minimum_48h": p.hcg_min_rise_48h,
                    "minimum_over_interval": round((1 + p.hcg_min_rise_48h) ** (pair.hours / 48) - 1, 4),
                },
                f"A serum hCG value rising less than {p.hcg_min_rise_48h:.0%} per 48 h (log-linear, scaled to the "
                f"interval) over the latest value at least {p.hcg_pair_min_hours} h before it, or any fall",
                source_of(p, HCG_SETTINGS, HCG_SOURCE),
            )
        )
    return found


def bleeding_in_pregnancy(f: Facts) -> list[Candidate]:
    """A bleed after a positive hCG (or while recorded pregnant): urgent when the serum hCG is not
    rising normally, since slow rise and bleeding together is the picture of a pregnancy at risk
    (ectopic or failing). Held, not raised, once the pregnancy has ended, until a period follows."""
    a, p = f.analysis, f.protocol
    if a.episode is None or not a.pregnancy_bleeds:
        return []
    pairs = abnormal_pairs(a.hcg, p)
    trend = a.hcg_trend
    slow = bool(pairs) or (trend is not None and trend.below_minimum)
    hcg = "serum hCG not rising normally" if slow else "no abnormal serum hCG trend logged"
    if trend is not None:
        hcg += f" ({trend.rise_48h:.0%} per 48 h over the last {p.hcg_fit_days} days)"
    found = []
    for bleed in a.pregnancy_bleeds:
        found.append(
            f.candidate(
                AlertKind.BLEEDING_IN_PREGNANCY,
                bleed.start.isoformat(),
                Severity.URGENT if slow else Severity.TODAY,
                f"Bleeding in pregnancy: {bleed.days} days from {bleed.start.isoformat()} ({bleed.heavy_days} heavy) "
                f"after the pregnancy began on {a.episode.start.isoformat()}; {hcg}: review "
                f"{'urgently' if slow else 'today'}. Not taken as a period.",
                {
                    "cycle_start": last_cycle_start(f),
                    "pregnancy_start": a.episode.start.isoformat(),
                    "bleed_start": bleed.start.isoformat(),
                    "bleed_end": bleed.end.isoformat(),
                    "bleed_days": bleed.days,
                    "heavy_days": bleed.heavy_days,
                    "hcg_rise_48h": None if trend is None else trend.rise_48h,
                    "hcg_abnormal_pairs": [
                        {"first": _hcg_json(x.first), "second": _hcg_json(x.second), "rise_48h": x.rise_48h} for x in pairs
                    ],
                },
                "A bleed after a positive hCG or while recorded pregnant; urgent when a serum hCG pair rises less than "
                f"{p.hcg_min_rise_48h:.0%} per 48 h or falls",
                source_of(p, HCG_SETTINGS, "common practice (bleeding in early pregnancy); " + HCG_SOURCE),
                raisable=a.pregnancy is not None,
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
