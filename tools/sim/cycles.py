"""Drawing the true cycles: lengths, ovulation, luteal phases, stimulated cycles, conception.

Population parameters are published figures: cycle length mean 28.9 days, SD 3.4, with 42.5% of
women varying by more than 7 days (Fehring 2006); luteal phase mean 14.13 days, SD 1.41, short
phases in 5.2% of cycles (Lenton 1984); basal temperature rise 0.2-0.5 C (WHO Global Handbook).
"""

from __future__ import annotations

import math
import random
from dataclasses import replace
from datetime import date, timedelta

from caseload.core.model import Plan
from tools.sim.chart import Profile, Scan, Stimulation, TrueCycle

POP_CYCLE_MEAN = 28.9  # Fehring 2006
POP_CYCLE_SD = 3.4  # Fehring 2006
# Within-woman SD is lognormal around 2.5 days: over 8 cycles that makes about 42% of women vary
# by more than 7 days (Fehring 2006: 42.5%). The rest of the SD 3.4 is spread between women.
WITHIN_SD_MEDIAN = 2.5
WITHIN_SD_LOG_SIGMA = 0.3
BETWEEN_SD = math.sqrt(
    POP_CYCLE_SD**2 - WITHIN_SD_MEDIAN**2 * math.exp(2 * WITHIN_SD_LOG_SIGMA**2) - 1 / 12
)
# Lenton 1984: mean 14.13, SD 1.41 over all phases, 5.2% short. The usual phases are a tighter
# normal (mean 14.38, SD 0.87) so that the mixture with 9-10 day phases has the published moments.
LUTEAL_USUAL_MEAN = 14.38
LUTEAL_USUAL_SD = 0.87
SHORT_LUTEAL_RATE = 0.052
SHORT_LUTEAL_DAYS = (9, 10)
ANOVULATORY_RATE = 0.03  # from memory: a few percent of cycles in ovulatory women
MIN_FOLLICULAR_DAYS = 8  # common practice: ovulation before cycle day 8 is exceptional; very
# short cycles have shorter luteal phases instead (from memory)
STIMULATED_PLANS = (Plan.OVULATION_INDUCTION, Plan.INSEMINATION)
MATURE_MM = 14.0  # Evans 2020
TRIGGER_MM = 18.0  # common practice

_BLEED_DAYS = (3, 4, 5, 6, 7)
_BLEED_WEIGHTS = (0.06, 0.16, 0.33, 0.3, 0.15)  # flow usually 5-7 days (common practice)


def population_profile(rng: random.Random, plan: Plan, charting_temps: bool) -> Profile:
    """A woman drawn from the regular-cycling population (Fehring 2006, Lenton 1984)."""
    return Profile(
        plan=plan,
        cycle_mean=rng.gauss(POP_CYCLE_MEAN, BETWEEN_SD),
        cycle_sd=WITHIN_SD_MEDIAN * math.exp(rng.gauss(0.0, WITHIN_SD_LOG_SIGMA)),
        luteal_mean=LUTEAL_USUAL_MEAN,
        luteal_sd=LUTEAL_USUAL_SD,
        short_luteal_rate=SHORT_LUTEAL_RATE,
        anovulatory_rate=ANOVULATORY_RATE,
        conception_rate=0.0,
        temp_low=rng.uniform(36.3, 36.5),  # WHO Global Handbook, low phase
        temp_rise=rng.uniform(0.25, 0.45),  # WHO Global Handbook: 0.2-0.5 C
        temp_noise=rng.uniform(0.07, 0.12),
        rise_days=(1, 1, 2, 3),
        wake_minute=rng.randrange(6 * 60, 7 * 60 + 15),
        charting_temps=charting_temps,
        temp_missing_rate=0.08,
        disturbed_rate=0.04,
        fahrenheit_rate=0.03 if rng.random() < 0.2 else 0.0,
        logs_mucus=rng.random() < 0.5,
        logs_lh=plan is Plan.TIMED or (plan is Plan.NATURAL and rng.random() < 0.4),
        gap_rate=0.12,
        multi_follicle_rate=0.08,
    )


def irregular_profile(rng: random.Random, plan: Plan, charting_temps: bool) -> Profile:
    """A woman with irregular cycles: long and variable, often anovulatory (FIGO 2018 'irregular')."""
    base = population_profile(rng, plan, charting_temps)
    return replace(
        base,
        cycle_mean=rng.uniform(31.0, 38.0),
        cycle_sd=rng.uniform(5.0, 9.0),
        anovulatory_rate=rng.uniform(0.15, 0.35),
    )


def draw_cycles(rng: random.Random, profile: Profile, first_start: date, end: date) -> list[TrueCycle]:
    """The true cycles from `first_start` until one starts after `end` or she conceives."""
    cycles: list[TrueCycle] = []
    start = first_start
    while start <= end:
        cycle = draw_cycle(rng, profile, start)
        cycles.append(cycle)
        if cycle.length is None:
            break
        start = cycle.next_start
    return cycles


def draw_cycle(rng: random.Random, profile: Profile, start: date) -> TrueCycle:
    """One cycle starting on `start`, drawn from the profile."""
    bleed = rng.choices(_BLEED_DAYS, _BLEED_WEIGHTS)[0]
    stimulation = None
    if profile.plan in STIMULATED_PLANS:
        stimulation = draw_stimulation(rng, profile, start)
        luteal = draw_luteal(rng, profile)
        ovulation_day = (stimulation.trigger - start).days + 2  # ovulation about 36 h after trigger
        length = ovulation_day + luteal
    elif rng.random() < profile.anovulatory_rate:
        length = draw_length(rng, profile) + rng.randint(4, 14)
        return TrueCycle(start, length, bleed, None)
    else:
        length = draw_length(rng, profile)
        luteal = draw_luteal(rng, profile)
        luteal = min(luteal, length - MIN_FOLLICULAR_DAYS)
        ovulation_day = length - luteal
    ovulation = start + timedelta(days=ovulation_day - 1)
    if rng.random() < profile.conception_rate:
        return TrueCycle(start, None, bleed, ovulation, True, stimulation)
    return TrueCycle(start, length, bleed, ovulation, False, stimulation)


def draw_length(rng: random.Random, profile: Profile) -> int:
    return min(60, max(18, round(rng.gauss(profile.cycle_mean, profile.cycle_sd))))


def draw_luteal(rng: random.Random, profile: Profile) -> int:
    if rng.random() < profile.short_luteal_rate:
        return rng.choice(SHORT_LUTEAL_DAYS)
    return min(17, max(11, round(rng.gauss(profile.luteal_mean, profile.luteal_sd))))  # ASRM 2021: 11-17


def draw_stimulation(rng: random.Random, profile: Profile, start: date) -> Stimulation:
    """Tablets, scans every 2-3 days from day 9 or 10, trigger once the lead reaches 18 mm.

    Follicles grow 1-2 mm a day (common practice). The number of mature follicles (14 mm or more,
    Evans 2020) on trigger day is one or two, or three to five in a multi-follicular response.
    """
    if rng.random() < 0.7:
        med_day, med = 3, f"letrozole {rng.choice(('2.5', '5', '7.5'))} mg days 3-7"
    else:
        med_day, med = 2, f"clomifene {rng.choice(('50', '100'))} mg days 2-6"
    growth = rng.uniform(1.0, 2.0)
    lead_day9 = rng.uniform(10.0, 13.5)
    scan_days = [rng.choice((9, 10))]
    while lead_day9 + growth * (scan_days[-1] - 9) < TRIGGER_MM:
        scan_days.append(scan_days[-1] + rng.choice((2, 3)))
    trigger_day = scan_days[-1]
    lead = lead_day9 + growth * (trigger_day - 9)
    if rng.random() < profile.multi_follicle_rate:
        mature = rng.randint(3, 5)
    else:
        mature = 1 if rng.random() < 0.65 else 2
    at_trigger = [lead] + [rng.uniform(MATURE_MM, lead - 0.5) for _ in range(mature - 1)]
    at_trigger += [rng.uniform(8.0, 13.4) for _ in range(rng.randint(1, 4))]
    rates = [growth] + [growth * rng.uniform(0.85, 1.0) for _ in at_trigger[1:]]
    scans = tuple(
        _scan(rng, start, day, at_trigger, rates, trigger_day) for day in scan_days
    )
    return Stimulation(
        med=med,
        med_day=start + timedelta(days=med_day - 1),
        scans=scans,
        trigger=start + timedelta(days=trigger_day - 1),
    )


def _scan(
    rng: random.Random, start: date, day: int, at_trigger: list[float], rates: list[float], trigger_day: int
) -> Scan:
    sizes = (size - rate * (trigger_day - day) for size, rate in zip(at_trigger, rates))
    # Round down to the half millimetre so a follicle reported mature really is 14 mm or more.
    follicles = sorted((math.floor(s * 2) / 2 for s in sizes if s >= 8.0), reverse=True)
    endometrium = round(min(12.0, 3.5 + 0.45 * day + rng.uniform(-0.6, 0.6)), 1)
    return Scan(start + timedelta(days=day - 1), tuple(follicles), endometrium)
