"""The drawn cycles match the published population figures."""

from __future__ import annotations

import random
import statistics
from datetime import date

from caseload.core.model import Plan
from tools.sim.cycles import draw_cycles, population_profile

START, END = date(2020, 1, 1), date(2020, 9, 30)


def _women(n: int, cycles_each: int = 8) -> list[list[int]]:
    """Cycle lengths of n regular-population women, ovulatory cycles only."""
    rng = random.Random(7)
    women = []
    for _ in range(n):
        profile = population_profile(rng, Plan.NATURAL, True)
        lengths: list[int] = []
        while len(lengths) < cycles_each:
            lengths += [c.length for c in draw_cycles(rng, profile, START, END) if c.ovulation is not None]
        women.append(lengths[:cycles_each])
    return women


def test_cycle_length_mean_and_sd_match_fehring_2006():
    lengths = [x for woman in _women(500) for x in woman]  # 4,000 cycles
    # Fehring 2006: mean 28.9 days, SD 3.4.
    assert abs(statistics.fmean(lengths) - 28.9) < 0.5
    assert abs(statistics.pstdev(lengths) - 3.4) < 0.3


def test_share_of_women_varying_over_seven_days_matches_fehring_2006():
    women = _women(500)
    share = sum(max(w) - min(w) > 7 for w in women) / len(women)
    # Fehring 2006: 42.5% of women varied by more than 7 days (about 7.5 cycles each).
    assert abs(share - 0.425) < 0.07


def test_luteal_phase_matches_lenton_1984():
    rng = random.Random(11)
    luteal = []
    for _ in range(600):
        profile = population_profile(rng, Plan.NATURAL, True)
        luteal += [c.luteal_length for c in draw_cycles(rng, profile, START, END) if c.luteal_length]
    assert len(luteal) > 4000
    # Lenton 1984: mean 14.13 days, SD 1.41, short phases in 5.2% of cycles.
    assert abs(statistics.fmean(luteal) - 14.13) < 0.3
    assert abs(statistics.pstdev(luteal) - 1.41) < 0.25
    assert abs(sum(x <= 10 for x in luteal) / len(luteal) - 0.052) < 0.02
    # ASRM 2021: typical phases 11-17 days; none longer than 17.
    assert max(luteal) <= 17


def test_luteal_length_of_a_drawn_cycle_counts_from_day_after_ovulation():
    rng = random.Random(3)
    profile = population_profile(rng, Plan.NATURAL, True)
    for cycle in draw_cycles(rng, profile, START, END):
        if cycle.ovulation is not None and cycle.length is not None:
            # Lenton 1984 counts from the day after ovulation to the day before menses.
            assert cycle.luteal_length == cycle.length - cycle.ovulation_cycle_day
            assert cycle.ovulation_cycle_day >= 8


def test_anovulatory_cycles_are_longer():
    rng = random.Random(5)
    ovulatory, anovulatory = [], []
    for _ in range(400):
        profile = population_profile(rng, Plan.NATURAL, True)
        for c in draw_cycles(rng, profile, START, END):
            (anovulatory if c.ovulation is None else ovulatory).append(c.length)
    assert anovulatory, "some anovulatory cycles expected at a 3% rate"
    # Anovulatory cycles add 4-14 days to the usual length.
    assert statistics.fmean(anovulatory) > statistics.fmean(ovulatory) + 5
