"""The faster paths give exactly what the plain ones give, on simulated charts.

Whole-caseload work reads observations straight from the rows, day masses share each edge's tail,
and the forecast sums its grid in factors: each is checked against the plain definition, for
equality, or to the last few bits where the sums run in another order.
"""

from __future__ import annotations

import math
from collections import defaultdict
from datetime import timedelta

import pytest

from tools.bench.build import BenchSpec, bench_staff, bench_store
from caseload.core.analysis import analyse
from caseload.core.distributions import SUPPORT_SCALES, _lower, _tail, day_masses
from caseload.core.model import observations
from caseload.core.prediction import _joint, _ovulation_margin, _period_margin, predictive
from caseload.core.settings import DEFAULT_PROTOCOL
from caseload.application.context import Context
from caseload.application.recompute import refresh_all
from caseload.application.entries import amend_entry, log_entry, void_entry
from caseload.store import Store


@pytest.fixture(scope="module")
def charted(tmp_path_factory):
    """A small bench store with corrections, a void and a same-day pair of readings."""
    built = bench_store(BenchSpec(12, 2, seed=5), tmp_path_factory.mktemp("identity"))
    store = Store(built.path)
    ctx = Context(store, bench_staff(store).nurses[0], built.spec.today)
    first = log_entry(ctx, "P00001", "bleed", "light", on="-3")
    void_entry(ctx, first.entry.id, "logged for the wrong patient")
    temp = log_entry(ctx, "P00002", "temp", "36.40", on="today", at="06:30")
    amend_entry(ctx, temp.entry.id, "36.45", "misread")
    log_entry(ctx, "P00002", "lh", "positive", on="today", at="05:00")
    log_entry(ctx, "P00002", "lh", "negative", on="today")
    yield store, built.spec
    store.close()


def test_observations_read_from_rows_equal_those_built_from_entries(charted):
    store, _ = charted
    lean = dict(store.entries.observations_by_patient())
    for patient in store.patients.all():
        plain = observations(store.entries.for_patient(patient.id))
        assert store.entries.observations_for(patient.id) == plain
        assert lean.get(patient.id, []) == plain


def test_refresh_all_stores_what_each_patient_computes_alone(charted):
    store, spec = charted
    ctx = Context(store, bench_staff(store).supervisor, spec.today)
    refresh_all(ctx)
    snapshots = store.state.all()
    for patient in store.patients.all():
        alone = analyse(patient, observations(store.entries.for_patient(patient.id)), spec.today)
        assert snapshots[patient.id].phase == alone.phase
        assert snapshots[patient.id].cycle_start == alone.cycle_start
        assert snapshots[patient.id].fertile_window == (alone.prediction.fertile_window if alone.prediction else None)


def t_lower_tail(z: float, dof: float) -> float:
    """P(T <= z) from the same tail function day_masses uses, so the two can agree to the last bit."""
    return _lower(z, _tail(z, dof))


def _plain_masses(centre: float, scale: float, dof: float, first_day: int) -> tuple[int, tuple[float, ...]]:
    """Each day's mass from its own two tails, as the definition reads."""
    lo = max(first_day, math.floor(centre - SUPPORT_SCALES * scale))
    hi = max(lo, math.ceil(centre + SUPPORT_SCALES * scale))
    masses = []
    for k in range(lo, hi + 1):
        a, b = (k - 0.5 - centre) / scale, (k + 0.5 - centre) / scale
        if a >= 0.0:
            masses.append(max(t_lower_tail(-a, dof) - t_lower_tail(-b, dof), 0.0))
        else:
            masses.append(max(t_lower_tail(b, dof) - t_lower_tail(a, dof), 0.0))
    total = math.fsum(masses)
    return lo, tuple(m / total for m in masses)


@pytest.mark.parametrize("centre, scale, dof", [(28.9, 3.4, 3.0), (14.13, 1.41, 4.0), (31.25, 5.7, 15.0),
                                                (27.0, 0.5, 9.0), (29.5, 2.0, 12.0), (3.0, 4.0, 3.0)])  # fmt: skip
def test_day_masses_equal_the_per_day_definition_exactly(centre, scale, dof):
    for first in (1, 2):
        assert day_masses.__wrapped__(centre, scale, dof, first) == _plain_masses(centre, scale, dof, first)


def _plain_grid(cycle, luteal, earliest: int, share: float, last_day: int) -> dict[tuple[int, int], float]:
    """P(O = o, N = n) cell by cell: each (cycle length L, luteal length T) pair ovulates on day
    L - T and bleeds next on day L + 1 (from `earliest` on), mixed with a flat `share` of sporadic
    ovulations on any day up to `last_day`."""
    l_first, l_masses = day_masses(cycle.centre, cycle.scale, cycle.dof, 2)
    t_first, t_masses = day_masses(luteal.centre, luteal.scale, luteal.dof, 1)
    pattern = {(length - t, length + 1): pl * pt for length, pl in enumerate(l_masses, l_first)
               for t, pt in enumerate(t_masses, t_first) if length - t >= earliest}  # fmt: skip
    total = math.fsum(pattern.values())
    days = range(earliest, max(last_day, max(o for (o, _), w in pattern.items() if w > 0.0)) + 1)
    grid: dict = defaultdict(float, {key: (1.0 - share) * w / total for key, w in pattern.items()})
    for o in days:
        for t, pt in enumerate(t_masses, t_first):
            grid[(o, o + t + 1)] += share * pt / len(days)
    return grid


def _plain_margin(grid: dict, index: int) -> tuple[list[int], list[float]]:
    sums: dict = defaultdict(float)
    for key, weight in grid.items():
        sums[key[index]] = sums[key[index]] + weight
    total = math.fsum(sums.values())
    days = sorted(sums)
    return days, [sums[d] / total for d in days]


def test_forecast_margins_equal_the_plain_sums():
    cycle = predictive([27, 29, 31, 28, 30, 26, 33], 28.9, 3.4, 2.5, 3.0)
    luteal = predictive([13, 14, 12], 14.13, 1.41, 1.0, 3.0)
    p = DEFAULT_PROTOCOL
    settings = (p.earliest_ovulation_day, p.late_ovulation_share, p.late_ovulation_last_day)
    grid, plain = _joint(cycle, luteal, *settings), _plain_grid(cycle, luteal, *settings)
    assert min(grid.weights) == p.earliest_ovulation_day and len(plain) > 500
    for factored, index in ((_ovulation_margin(grid), 0), (_period_margin(grid), 1)):
        days, probs = _plain_margin(plain, index)
        assert factored[0] == days
        assert factored[1] == pytest.approx(probs, rel=1e-12, abs=1e-15)


def test_analysis_is_the_same_on_every_day_whatever_else_was_computed_before(charted):
    """The day-mass cache and the shared margins leave no trace between calls."""
    store, spec = charted
    patient = store.patients.get("P00003")
    seen = store.entries.observations_for(patient.id)
    days = [spec.today - timedelta(days=k) for k in range(0, 400, 23)]
    first = [analyse(patient, seen, d) for d in days]
    day_masses.cache_clear()
    assert [analyse(patient, seen, d) for d in reversed(days)] == first[::-1]
