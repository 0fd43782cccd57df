"""Turning true cycles into what a patient reports: temperatures, bleeding, mucus, tests, treatment.

Charting habits (missed readings, disturbed and late readings, readings in F, logging gaps) come
from the profile; the body's signals come from the cycle truth.
"""

from __future__ import annotations

import math
import random
from collections.abc import Callable
from datetime import date, timedelta

from caseload.core.model import MUCUS_SCALE, Kind, Plan
from tools.sim.chart import Profile, SimEntry, Stimulation, TrueCycle

LATE_AFTER = 9 * 60  # readings after 09:00 are flagged late (common practice)
FEVER_FREE_MAX_C = 37.9  # ordinary disturbances never reach a fever (38.0 C)
HCG_MEDIAN_RISE_48H = 2.24  # Barnhart 2004: median rise 124% in 2 days
HCG_RISE_LOG_SD = 0.163  # puts Barnhart's 53% minimum rise near the 1st centile
HCG_14DPO_MEDIAN = 90.0  # IU/L, from memory
Events = dict[int, list[tuple[Kind, str]]]
AddEvent = Callable[[int, Kind, str], None]
_DISTURBANCES = (("poor-sleep", -0.1, 0.25), ("alcohol", 0.1, 0.3), ("illness", 0.3, 0.8))
_SYMPTOMS = ("cramps", "breast tenderness", "headache", "bloating", "mild pelvic ache", "tired")
_NOTES = ("asked about next appointment", "travelling this week", "partner away two days")
# Mucus ordinals (MUCUS_SCALE) by days from ovulation: the peak-type days sit just before it.
_MUCUS_BY_DAY = {-6: (1, 2), -5: (2, 3), -4: (3, 3, 4), -3: (3, 4), -2: (4, 5), -1: (5,), 0: (4, 5), 1: (2, 3)}


def render_chart(
    rng: random.Random, profile: Profile, cycles: list[TrueCycle], first: date, last: date
) -> list[SimEntry]:
    """Every entry from `first` to `last` (inclusive), in day order."""
    out: list[SimEntry] = []
    for cycle in cycles:
        render_cycle(rng, profile, cycle, first, last, out)
    return out


def render_cycle(
    rng: random.Random, p: Profile, cycle: TrueCycle, first: date, last: date, out: list[SimEntry]
) -> None:
    """Append the entries of one cycle that fall between `first` and `last`."""
    ov = None if cycle.ovulation is None else (cycle.ovulation - cycle.start).days
    events, stop = _events(rng, p, cycle, ov)
    span = cycle.length if cycle.length is not None else stop + 1
    k_first = max(0, (first - cycle.start).days)
    k_last = min(span - 1, (last - cycle.start).days)
    gap = _gap(rng, p, cycle, span)
    ramp = rng.choice(p.rise_days)
    missed = False
    for k in range(k_first, k_last + 1):
        if gap[0] <= k < gap[1]:
            continue
        day = cycle.start + timedelta(days=k)
        if p.charting_temps:
            missed = not missed and rng.random() < p.temp_missing_rate
            if not missed:
                out.append(_temp(rng, p, day, _level(p, cycle, ov, k, ramp)))
        if k < cycle.bleed_days:
            out.append(SimEntry(day, Kind.BLEED, flow(rng, k, cycle.bleed_days)))
        elif p.logs_mucus:
            out.append(SimEntry(day, Kind.MUCUS, MUCUS_SCALE[_mucus(rng, cycle, ov, k)]))
        for kind, raw in events.get(k, ()):
            out.append(SimEntry(day, kind, raw))
        roll = rng.random()
        if roll < 0.03:
            out.append(SimEntry(day, Kind.SYMPTOM, rng.choice(_SYMPTOMS)))
        elif roll > 0.993:
            out.append(SimEntry(day, Kind.NOTE, rng.choice(_NOTES)))


def flow(rng: random.Random, k: int, bleed_days: int) -> str:
    """Heavy or moderate early, then light, often spotting on the last day (common practice)."""
    if k == 0:
        return rng.choice(("moderate", "heavy", "light"))
    share = k / bleed_days
    if share < 0.4:
        return rng.choice(("heavy", "moderate", "moderate"))
    if k == bleed_days - 1 and bleed_days >= 4:
        return rng.choice(("spotting", "spotting", "light"))
    return "moderate" if share < 0.6 and rng.random() < 0.5 else "light"


def _level(p: Profile, cycle: TrueCycle, ov: int | None, k: int, ramp: int) -> float:
    if ov is None or k <= ov:
        return p.temp_low
    rise = p.temp_rise * min(1.0, (k - ov) / ramp)
    if cycle.conceived:
        return p.temp_low + rise + 0.05 * min(1.0, (k - ov) / 14)
    if k == cycle.length - 1:
        return p.temp_low + rise * 0.5  # the drop the day before the period
    return p.temp_low + rise


def _temp(rng: random.Random, p: Profile, day: date, level: float) -> SimEntry:
    value = level + rng.gauss(0.0, p.temp_noise)
    minute = p.wake_minute + rng.randint(-20, 20)
    flags: tuple[str, ...] = ()
    if rng.random() < p.disturbed_rate:
        if rng.random() < 0.3:
            minute, flags = rng.randint(LATE_AFTER + 5, 10 * 60 + 30), ("late",)
            value += rng.uniform(0.1, 0.25)
        else:
            name, lo, hi = rng.choice(_DISTURBANCES)
            value, flags = value + rng.uniform(lo, hi), (name,)
    value = min(value, FEVER_FREE_MAX_C)
    if rng.random() < p.fahrenheit_rate:
        raw = f"{value * 1.8 + 32:.1f}F"
    else:
        raw = f"{value:.2f}"
    return SimEntry(day, Kind.TEMP, raw, f"{minute // 60:02d}:{minute % 60:02d}", flags)


def _mucus(rng: random.Random, cycle: TrueCycle, ov: int | None, k: int) -> int:
    if ov is None:
        return rng.choice((0, 0, 1, 1, 2, 3))  # patches without a peak build-up
    choices = _MUCUS_BY_DAY.get(k - ov)
    if choices is not None:
        return rng.choice(choices)
    if k > ov and cycle.conceived:
        return rng.choice((2, 3))
    return rng.choice((0, 1, 1, 2)) if k < ov else rng.choice((0, 0, 1, 2))


def _gap(rng: random.Random, p: Profile, cycle: TrueCycle, span: int) -> tuple[int, int]:
    """A 3-7 day stretch of the cycle with no entries at all, or an empty range."""
    if rng.random() >= p.gap_rate or span < cycle.bleed_days + 12:
        return (0, 0)
    start = rng.randint(cycle.bleed_days + 1, span - 10)
    return (start, start + rng.randint(3, 7))


def _events(rng: random.Random, p: Profile, cycle: TrueCycle, ov: int | None) -> tuple[Events, int]:
    """Tests and treatment by cycle-day index, and the last day a pregnant patient logs."""
    events: Events = {}

    def add(k: int, kind: Kind, raw: str) -> None:
        events.setdefault(k, []).append((kind, raw))

    if p.logs_lh:
        for k, raw in _lh_tests(rng, cycle, ov):
            add(k, Kind.LH, raw)
    if cycle.stimulation is not None:
        _stimulation_events(cycle.start, cycle.stimulation, p.plan, add)
    if ov is not None and p.plan is Plan.TIMED and p.logs_lh:
        add(ov - 1, Kind.INTERCOURSE, "yes")
        add(ov, Kind.INTERCOURSE, "yes")
    elif ov is not None and p.plan is Plan.OVULATION_INDUCTION:
        add(ov, Kind.INTERCOURSE, "yes")
    stop = -1
    if ov is not None and cycle.conceived:
        stop = ov + _pregnancy_tests(rng, ov, add)
    elif ov is not None and p.plan is not Plan.NATURAL and rng.random() < 0.3:
        add(ov + min(cycle.luteal_length or 14, rng.randint(12, 14)), Kind.HCG, "negative")
    return events, stop


def _lh_tests(rng: random.Random, cycle: TrueCycle, ov: int | None) -> list[tuple[int, str]]:
    """Daily tests until the surge: first positive the day before ovulation, sometimes two days
    before (WHO Task Force 1980: median 32 h from the LH rise to ovulation)."""
    if ov is None:
        first = max(cycle.bleed_days, 9)
        return [(k, "negative") for k in range(first, first + 10)]
    first_positive = ov - (2 if rng.random() < 0.3 else 1)
    start = max(cycle.bleed_days, ov - rng.randint(4, 6))
    return [(k, "negative") for k in range(start, first_positive)] + [
        (k, "positive") for k in range(first_positive, ov)
    ]


def _stimulation_events(start: date, stim: Stimulation, plan: Plan, add: AddEvent) -> None:
    add((stim.med_day - start).days, Kind.MED, stim.med)
    for scan in stim.scans:
        follicles = ",".join(f"{f:g}" for f in scan.follicles_mm)
        add((scan.day - start).days, Kind.SCAN, f"{follicles} endo {scan.endometrium_mm:g}")
    trigger = (stim.trigger - start).days
    add(trigger, Kind.TRIGGER, "hCG 5000 IU")
    if plan is Plan.INSEMINATION:
        add(trigger + 1, Kind.INSEMINATION, "IUI, partner sample")


def _pregnancy_tests(rng: random.Random, ov: int, add: AddEvent) -> int:
    """Urine test positive about 14 days after ovulation, then for many serial serum hCG rising
    by a median 124% per 48 h (Barnhart 2004). Returns days after ovulation that logging stops."""
    positive = rng.randint(13, 16)
    if rng.random() < 0.3:
        add(ov + rng.randint(10, 12), Kind.HCG, "negative")
    add(ov + positive, Kind.HCG, "positive")
    if rng.random() < 0.6:
        level = HCG_14DPO_MEDIAN * math.exp(rng.gauss(0.0, 0.5))
        rate = math.log(HCG_MEDIAN_RISE_48H) + rng.gauss(0.0, HCG_RISE_LOG_SD)
        for dpo in (positive + 1, positive + 3, positive + 5):
            value = level * math.exp(rate * (dpo - 14) / 2) * rng.uniform(0.95, 1.05)
            add(ov + dpo, Kind.HCG, f"{value:.0f}")
    return positive + rng.randint(7, 21)
