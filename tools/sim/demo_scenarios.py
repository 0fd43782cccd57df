"""Hand-designed scenarios of the demo caseload: each patient is built to raise known alerts.

Every chart comes from the simulator with targeted tweaks. Quiet patients are placed where no
rule fires on the build day: on day 1-2 of a new cycle, or in a luteal phase after a clear rise.
"""

from __future__ import annotations

import random
from collections.abc import Callable
from datetime import date, timedelta

from caseload.core.model import Kind
from tools.sim.chart import Profile, SimEntry, TrueCycle
from tools.sim.demo_build import (
    TODAY,
    Current,
    Logged,
    add,
    day_of,
    drop,
    history_before,
    logged,
    render,
    scripted,
    temp,
)

Build = Callable[[random.Random, Profile], list[Logged]]


def _current_start(cycles: list[TrueCycle]) -> date:
    return cycles[-1].start


def quiet(today_cd: int, mean: int = 28) -> Build:
    """Regular cycles of `mean` +/- 1 days with ovulation 13-15 days before each period.

    Place today on day 1-2 of a new cycle or 6-10 days after ovulation, well before the next period.
    """

    def build(rng: random.Random, profile: Profile) -> list[Logged]:
        current = Current(today_cd, mean - 14, mean)
        return logged(render(rng, profile, scripted(rng, profile, current, mean=mean)))

    return build


def amended_temperature(rng: random.Random, profile: Profile) -> list[Logged]:
    """A reading keyed with its digits swapped, then corrected by the nurse."""
    entries = quiet(20)(rng, profile)
    target = TODAY - timedelta(days=45)
    rows: list[Logged] = []
    for row in entries:
        e = row.entry
        if e.kind is Kind.TEMP and e.day == target:
            wrong = e.raw[:-2] + e.raw[-1] + e.raw[-2]
            if wrong == e.raw:
                wrong = f"{float(e.raw) + 0.4:.2f}"
            rows.append(Logged(SimEntry(e.day, e.kind, wrong, e.time, e.flags)))
            rows.append(Logged(e, amend_reason=f"digits swapped when logged; patient read back {e.raw}"))
        else:
            rows.append(row)
    return rows


def voided_bleed(rng: random.Random, profile: Profile) -> list[Logged]:
    """A heavy bleed logged against her by mistake, voided the same day."""
    rows = quiet(1)(rng, profile)
    slip = Logged(SimEntry(TODAY - timedelta(days=9), Kind.BLEED, "heavy"), void_reason="logged against the wrong patient")
    return sorted([*rows, slip], key=lambda r: r.entry.day)


def irregular(rng: random.Random, profile: Profile) -> list[Logged]:
    """Cycles of 24 to 45 days, all ovulatory with a normal luteal phase; today after a late rise."""
    recent = [(24, 11), (41, 27), (29, 15), (45, 31), (26, 13), (36, 22)]
    cycles = scripted(rng, profile, Current(26, 20, 34), recent)
    return logged(render(rng, profile, cycles))


def monophasic_last_cycle(rng: random.Random, profile: Profile) -> list[Logged]:
    cycles = scripted(rng, profile, Current(21, 14, 28), [(33, None)])
    return logged(render(rng, profile, cycles))


def short_luteal_last_cycle(rng: random.Random, profile: Profile) -> list[Logged]:
    """Last cycle 25 days with ovulation on day 17: an 8-day luteal phase."""
    cycles = scripted(rng, profile, Current(2, 14, 28), [(25, 17)])
    return logged(render(rng, profile, cycles))


def lh_positive_today(rng: random.Random, profile: Profile) -> list[Logged]:
    cycles = scripted(rng, profile, Current(13, 14, 28))
    start = _current_start(cycles)
    entries = drop(render(rng, profile, cycles), start, TODAY, [Kind.LH])
    tests = [SimEntry(day_of(start, cd), Kind.LH, "negative") for cd in (10, 11, 12)]
    return logged(add(entries, *tests, SimEntry(TODAY, Kind.LH, "positive")))


def window_approaching(rng: random.Random, profile: Profile) -> list[Logged]:
    """Regular 31-33 day cycles, today day 8: P(fertile) crosses 0.2 within three days."""
    cycles = scripted(rng, profile, Current(8, 18, 32), mean=32)
    return logged(render(rng, profile, cycles))


def window_open(rng: random.Random, profile: Profile) -> list[Logged]:
    return logged(render(rng, profile, scripted(rng, profile, Current(12, 14, 28))))


def no_shift(rng: random.Random, profile: Profile) -> list[Logged]:
    """Regular ovulatory history; this cycle anovulatory so far: day 24, readings low throughout."""
    return logged(render(rng, profile, scripted(rng, profile, Current(24, None, 45))))


def overdue(rng: random.Random, profile: Profile) -> list[Logged]:
    """Rise on day 15, readings fell back on days 29-31, then she stopped taking them; no bleed."""
    cycles = scripted(rng, profile, Current(37, 14))
    start = _current_start(cycles)
    entries = drop(render(rng, profile, cycles), day_of(start, 29), TODAY, [Kind.TEMP])
    lows = [temp(day_of(start, cd), profile.temp_low + d) for cd, d in ((29, 0.05), (30, -0.02), (31, 0.01))]
    return logged(add(entries, *lows))


def sustained_high(rng: random.Random, profile: Profile) -> list[Logged]:
    """Ovulation on day 14, temperatures high ever since; today day 36, no test yet."""
    return logged(render(rng, profile, scripted(rng, profile, Current(36, 14))))


def early_pregnancy(first_hcg: int, second_hcg: int) -> Build:
    """Positive urine test 12 days after ovulation, then two serum values 48 h apart."""

    def build(rng: random.Random, profile: Profile) -> list[Logged]:
        cycles = scripted(rng, profile, Current(29, 14))
        start = _current_start(cycles)
        entries = drop(render(rng, profile, cycles), start, TODAY, [Kind.HCG])
        tests = (
            SimEntry(day_of(start, 26), Kind.HCG, "positive"),
            SimEntry(day_of(start, 27), Kind.HCG, str(first_hcg)),
            SimEntry(TODAY, Kind.HCG, str(second_hcg)),
        )
        return logged(add(entries, *tests))

    return build


def bleeding_in_pregnancy(rng: random.Random, profile: Profile) -> list[Logged]:
    """Positive urine test, serum hCG 150 then 180 over 48 h (slow), light bleeding since yesterday."""
    cycles = scripted(rng, profile, Current(29, 14))
    start = _current_start(cycles)
    entries = drop(render(rng, profile, cycles), start + timedelta(days=5), TODAY, [Kind.HCG, Kind.BLEED])
    yesterday = TODAY - timedelta(days=1)
    tests = (
        SimEntry(day_of(start, 26), Kind.HCG, "positive"),
        SimEntry(day_of(start, 27), Kind.HCG, "150"),
        SimEntry(yesterday, Kind.HCG, "180"),
        SimEntry(yesterday, Kind.BLEED, "light", note="cramps"),
        SimEntry(TODAY, Kind.BLEED, "light"),
    )
    return logged(add(entries, *tests))


def intermenstrual(rng: random.Random, profile: Profile) -> list[Logged]:
    """Day 18 of a regular cycle; light bleeding marked mid-cycle on days 15 to 17."""
    cycles = scripted(rng, profile, Current(18, 14, 28))
    start = _current_start(cycles)
    spots = (SimEntry(day_of(start, cd), Kind.BLEED, "light", flags=("midcycle",)) for cd in (15, 16, 17))
    return logged(add(render(rng, profile, cycles), *spots))


def stimulated_luteal(rng: random.Random, profile: Profile) -> list[Logged]:
    """Tablets, scans and a trigger on day 12-13; today a week after ovulation."""
    return logged(render(rng, profile, scripted(rng, profile, Current(21, 14, 28))))


def multiple_follicles(rng: random.Random, profile: Profile) -> list[Logged]:
    """Stimulated history; this cycle today's scan shows four follicles of 14 mm or more."""
    cycles = scripted(rng, profile, Current(12, 14, 28, treatment=False))
    start = _current_start(cycles)
    entries = render(rng, profile, cycles)
    treatment = (
        SimEntry(day_of(start, 3), Kind.MED, "letrozole 5 mg days 3-7"),
        SimEntry(day_of(start, 8), Kind.SCAN, "12.5,12,11,10,9 endo 6.8"),
        SimEntry(day_of(start, 10), Kind.SCAN, "16,14.5,13.5,12.5,10 endo 8.1"),
        SimEntry(TODAY, Kind.SCAN, "19,17.5,16,14.5,11 endo 9.4"),
        SimEntry(TODAY, Kind.NOTE, "trigger withheld pending review: four follicles 14 mm or more"),
    )
    return logged(add(entries, *treatment))


def prolonged_bleed(rng: random.Random, profile: Profile) -> list[Logged]:
    """Day 11 of a bleed that has not stopped (light to moderate flow every day)."""
    return logged(render(rng, profile, scripted(rng, profile, Current(11, 16, 30, bleed_days=14))))


def amenorrhoea(rng: random.Random, profile: Profile) -> list[Logged]:
    """Two 29-day cycles after joining, then no bleed for 105 days; mucus logged daily."""
    cycles = scripted(rng, profile, Current(106, None, 200), [(29, 15), (29, 15)], days_back=0)
    return logged(render(rng, profile, cycles))


def logging_gap(rng: random.Random, profile: Profile) -> list[Logged]:
    """Luteal phase after a clear rise; nothing logged for the last four days."""
    cycles = scripted(rng, profile, Current(21, 13, 28))
    entries = drop(render(rng, profile, cycles), TODAY - timedelta(days=3), TODAY)
    return logged(entries)


def fever(rng: random.Random, profile: Profile) -> list[Logged]:
    """Luteal phase; 38.4 C yesterday and 37.9 C today, both flagged illness."""
    cycles = scripted(rng, profile, Current(22, 14, 28))
    yesterday = TODAY - timedelta(days=1)
    entries = drop(render(rng, profile, cycles), yesterday, TODAY, [Kind.TEMP])
    sick = (
        temp(yesterday, 38.4, "07:05", ("illness",), "flu since the weekend"),
        SimEntry(yesterday, Kind.SYMPTOM, "fever, sore throat"),
        temp(TODAY, 37.9, "06:50", ("illness",)),
    )
    return logged(add(entries, *sick))


def discharged_after_pregnancy(rng: random.Random, profile: Profile) -> list[Logged]:
    """Conceived about five months ago; she stopped taking temperatures once the test was positive,
    and logging stopped once care was handed on."""
    start = TODAY - timedelta(days=150)
    cycles = history_before(rng, profile, start, 29, 260)
    cycles.append(TrueCycle(start, None, 5, day_of(start, 15), conceived=True))
    entries = render(rng, profile, cycles)
    positive = min(e.day for e in entries if e.kind is Kind.HCG and e.raw == "positive" and e.day >= start)
    return logged(drop(entries, positive + timedelta(days=1), TODAY, [Kind.TEMP]))
