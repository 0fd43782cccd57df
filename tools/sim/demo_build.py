"""Building blocks for hand-designed demo charts: scripted cycles, quiet profiles and tweaks.

Demo charts are dated against a stand-in build day, `TODAY`; only offsets from it are written,
so the demo can be rebuilt relative to any real day.
"""

from __future__ import annotations

import random
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta

from caseload.core.model import Kind, Plan
from tools.sim.chart import Profile, SimEntry, Stimulation, TrueCycle
from tools.sim.cycles import STIMULATED_PLANS, draw_stimulation
from tools.sim.render import render_chart

TODAY = date(2001, 1, 1)  # stand-in build day; nothing is dated after it
USUAL_TRIGGER_DAYS = (12, 13)  # stimulated demo cycles trigger here, so their lengths stay regular


@dataclass(frozen=True)
class Logged:
    """A demo entry as it goes into the seed file, with its correction or void reason if any."""

    entry: SimEntry
    amend_reason: str = ""
    void_reason: str = ""


@dataclass(frozen=True)
class Current:
    """The cycle open on the build day: its day today and how it will (or would) unfold."""

    today_cd: int
    ovulation_cd: int | None
    length: int = 60  # only the days up to the build day are rendered
    bleed_days: int = 5
    treatment: bool = True  # on a stimulated plan: render its tablets, scans and trigger


def day_of(start: date, cycle_day: int) -> date:
    return start + timedelta(days=cycle_day - 1)


def offset(day: date) -> int:
    return (day - TODAY).days


def quiet_profile(
    rng: random.Random, plan: Plan, temps: bool, mucus: bool, lh: bool, fahrenheit: bool
) -> Profile:
    """A woman whose chart reads cleanly: a sharp 0.42-0.5 C rise, little noise, no gaps."""
    return Profile(
        plan=plan,
        cycle_mean=28.0,
        cycle_sd=1.0,
        luteal_mean=14.0,
        luteal_sd=0.7,
        short_luteal_rate=0.0,
        anovulatory_rate=0.0,
        conception_rate=0.0,
        temp_low=round(rng.uniform(36.3, 36.5), 2),
        temp_rise=rng.uniform(0.42, 0.5),
        temp_noise=rng.uniform(0.04, 0.05),
        rise_days=(1,),
        wake_minute=rng.randrange(6 * 60, 7 * 60 + 15),
        charting_temps=temps,
        temp_missing_rate=0.03,
        disturbed_rate=0.02,
        fahrenheit_rate=0.3 if fahrenheit else 0.0,
        logs_mucus=mucus or not temps,
        logs_lh=lh and plan not in STIMULATED_PLANS,
        gap_rate=0.0,
        multi_follicle_rate=0.0,
    )


def scripted(
    rng: random.Random,
    profile: Profile,
    current: Current,
    recent: Sequence[tuple[int, int | None]] = (),
    mean: int = 28,
    days_back: int = 230,
) -> list[TrueCycle]:
    """Cycles ending in `current` on the build day; before it the `recent` (length, ovulation day)
    cycles in date order, and before those regular cycles of `mean` +/- 1 days back to `days_back`."""
    start = TODAY - timedelta(days=current.today_cd - 1)
    treated = profile.plan in STIMULATED_PLANS and current.treatment
    cycles = [_cycle(rng, profile, start, current.length, current.ovulation_cd, current.bleed_days, treated)]
    for length, ov in reversed(recent):
        start -= timedelta(days=length)
        cycles.append(_cycle(rng, profile, start, length, ov, rng.randint(4, 6), False))
    cycles.reverse()
    return history_before(rng, profile, start, mean, days_back) + cycles


def history_before(rng: random.Random, profile: Profile, start: date, mean: int, days_back: int) -> list[TrueCycle]:
    """Regular cycles (stimulated ones on a stimulated plan) ending the day before `start`,
    going back until the first begins `days_back` or more days before the build day."""
    cycles: list[TrueCycle] = []
    while (TODAY - start).days < days_back:
        if profile.plan in STIMULATED_PLANS:
            cycle = _stimulated_history_cycle(rng, profile, start)
        else:
            length = mean + rng.randint(-1, 1)
            ov = length - rng.randint(13, 15)
            cycle = _cycle(rng, profile, start - timedelta(days=length), length, ov, rng.randint(4, 6), False)
        cycles.append(cycle)
        start = cycle.start
    cycles.reverse()
    return cycles


def _cycle(
    rng: random.Random, profile: Profile, start: date, length: int, ov: int | None, bleed: int, stimulated: bool
) -> TrueCycle:
    if stimulated and ov is not None:
        stim = _stimulation(rng, profile, start)
        ov = (stim.trigger - start).days + 2
        return TrueCycle(start, length, bleed, day_of(start, ov), stimulation=stim)
    return TrueCycle(start, length, bleed, None if ov is None else day_of(start, ov))


def _stimulated_history_cycle(rng: random.Random, profile: Profile, next_start: date) -> TrueCycle:
    """A completed stimulated cycle ending the day before `next_start`."""
    placeholder = next_start - timedelta(days=40)
    stim = _stimulation(rng, profile, placeholder)
    ov = (stim.trigger - placeholder).days + 2
    length = ov + rng.randint(13, 15)
    start = next_start - timedelta(days=length)
    stim = _moved(stim, (start - placeholder).days)
    return TrueCycle(start, length, rng.randint(4, 6), day_of(start, ov), stimulation=stim)


def _stimulation(rng: random.Random, profile: Profile, start: date) -> Stimulation:
    while True:
        stim = draw_stimulation(rng, profile, start)
        if (stim.trigger - start).days + 1 in USUAL_TRIGGER_DAYS:
            return stim


def _moved(stim: Stimulation, days: int) -> Stimulation:
    shift = timedelta(days=days)
    scans = tuple(replace(s, day=s.day + shift) for s in stim.scans)
    return replace(stim, med_day=stim.med_day + shift, scans=scans, trigger=stim.trigger + shift)


def render(rng: random.Random, profile: Profile, cycles: list[TrueCycle]) -> list[SimEntry]:
    """The chart from the first cycle's day 1 to the build day."""
    return render_chart(rng, profile, cycles, cycles[0].start, TODAY)


def drop(entries: list[SimEntry], first: date, last: date, kinds: Iterable[Kind] | None = None) -> list[SimEntry]:
    """The entries without those of `kinds` (all kinds if None) dated `first` to `last`."""
    wanted = None if kinds is None else set(kinds)
    return [e for e in entries if not (first <= e.day <= last and (wanted is None or e.kind in wanted))]


def add(entries: list[SimEntry], *new: SimEntry) -> list[SimEntry]:
    """The entries with `new` ones placed after those already logged that day."""
    return sorted([*entries, *new], key=lambda e: e.day)


def temp(day: date, value: float, time: str = "06:40", flags: tuple[str, ...] = (), note: str = "") -> SimEntry:
    return SimEntry(day, Kind.TEMP, f"{value:.2f}", time, flags, note)


def logged(entries: list[SimEntry]) -> list[Logged]:
    return [Logged(e) for e in entries]
