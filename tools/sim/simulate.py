"""Seeded simulation of patients' charts: the public entry points.

Pure: every draw comes from the `random.Random` passed in (or seeded here), no clock, no I/O.
"""

from __future__ import annotations

import random
from collections.abc import Iterator, Sequence
from dataclasses import replace
from datetime import date, timedelta

from caseload.core.model import Patient, PatientStatus, Plan
from tools.sim.chart import Profile, SimChart
from tools.sim.cycles import draw_cycles, irregular_profile, population_profile
from tools.sim.render import render_chart

# Caseload mix (common practice for a fertility service's monitored caseload).
PLAN_WEIGHTS = {Plan.NATURAL: 0.45, Plan.TIMED: 0.25, Plan.OVULATION_INDUCTION: 0.15, Plan.INSEMINATION: 0.15}
# Chance of conceiving per ovulatory cycle, by plan: a subfertile caseload (from memory).
CONCEPTION_RATE = {Plan.NATURAL: 0.01, Plan.TIMED: 0.015, Plan.OVULATION_INDUCTION: 0.025, Plan.INSEMINATION: 0.03}
IRREGULAR_SHARE = 0.15
CHARTING_TEMPS_SHARE = 0.6


def simulate_patient(rng: random.Random, profile: Profile, start: date, end: date) -> SimChart:
    """Entries from `start` to `end` inclusive. She may be part-way through a cycle on `start`:
    the first true cycle can begin before it, and only days from `start` on are logged."""
    if end < start:
        raise ValueError(f"end {end} is before start {start}; give an end on or after the start")
    first_start = start - timedelta(days=rng.randrange(0, max(1, round(profile.cycle_mean))))
    cycles = draw_cycles(rng, profile, first_start, end)
    return SimChart(profile, render_chart(rng, profile, cycles, start, end), cycles)


def caseload_profile(rng: random.Random) -> Profile:
    """One patient of the mix: plan, regular or irregular cycles, charting temperatures or not."""
    plan = rng.choices(list(PLAN_WEIGHTS), list(PLAN_WEIGHTS.values()))[0]
    temps = rng.random() < CHARTING_TEMPS_SHARE
    draw = irregular_profile if rng.random() < IRREGULAR_SHARE else population_profile
    profile = draw(rng, plan, temps)
    return replace(profile, conception_rate=CONCEPTION_RATE[plan], logs_mucus=profile.logs_mucus or not temps)


def simulate_caseload(
    seed: int, n_patients: int, start: date, end: date, nurses: Sequence[str] = ()
) -> Iterator[tuple[Patient, SimChart]]:
    """`n_patients` patients ("P00001"...) charting from `start` to `end`, nurses assigned in turn.

    Patient i depends only on (seed, i), so a larger caseload extends a smaller one.
    """
    if n_patients < 0:
        raise ValueError(f"n_patients is {n_patients}; give zero or more")
    for i in range(n_patients):
        yield simulate_caseload_patient(seed, i, start, end, nurses)


def simulate_caseload_patient(
    seed: int, i: int, start: date, end: date, nurses: Sequence[str] = ()
) -> tuple[Patient, SimChart]:
    """Patient number `i` (from 0) of `simulate_caseload`'s caseload, simulated alone."""
    rng = random.Random(seed * 1_000_003 + i)
    profile = caseload_profile(rng)
    chart = simulate_patient(rng, profile, start, end)
    pregnant = bool(chart.truth) and chart.truth[-1].conceived
    return (
        Patient(
            id=f"P{i + 1:05d}",
            name=f"Simulated patient {i + 1}",
            born=start - timedelta(days=rng.randint(24 * 365, 43 * 365)),
            nurse_id=nurses[i % len(nurses)] if nurses else None,
            status=PatientStatus.PREGNANT if pregnant else PatientStatus.ACTIVE,
            plan=profile.plan,
            created=start - timedelta(days=rng.randint(0, 30)),
            charting_temps=profile.charting_temps,
        ),
        chart,
    )
