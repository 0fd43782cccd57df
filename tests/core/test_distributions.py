"""Whole-day masses of the Student's t predictive, cross-checked against scipy.stats."""

import math

import pytest
from scipy import stats

from caseload.core.distributions import day_masses, regularized_beta


def test_regularized_beta_matches_scipy():
    from scipy.special import betainc

    for a, b, x in [(0.5, 0.5, 0.3), (7.5, 0.5, 0.9), (2.0, 3.0, 0.01), (40.0, 0.5, 0.97)]:
        assert regularized_beta(a, b, x) == pytest.approx(betainc(a, b, x), rel=1e-10)


@pytest.mark.parametrize("centre, scale, dof", [(28.9, 3.93, 3.0), (14.13, 1.63, 3.0), (27.4, 1.2, 15.0)])
def test_day_masses_match_scipy_t(centre, scale, dof):
    first, masses = day_masses(centre, scale, dof)
    days = range(first, first + len(masses))
    dist = stats.t(dof, loc=centre, scale=scale)
    raw = [dist.cdf(k + 0.5) - dist.cdf(k - 0.5) for k in days]
    total = sum(raw)
    for ours, theirs in zip(masses, raw):
        assert ours == pytest.approx(theirs / total, rel=1e-7, abs=1e-13)
    assert math.fsum(masses) == pytest.approx(1.0, abs=1e-12)


def test_with_a_long_history_the_masses_are_the_discretised_normal():
    # The t predictive tends to the normal; at 10,000 degrees of freedom they agree to 1e-4
    # (scipy.stats.norm).
    first, masses = day_masses(28.9, 3.4, 10_000.0)
    dist = stats.norm(28.9, 3.4)
    raw = [dist.cdf(k + 0.5) - dist.cdf(k - 0.5) for k in range(first, first + len(masses))]
    for ours, theirs in zip(masses, raw):
        assert ours == pytest.approx(theirs / sum(raw), abs=1e-4)


def test_masses_start_no_earlier_than_asked():
    first, masses = day_masses(3.0, 4.0, 3.0, 2)
    assert first == 2 and math.fsum(masses) == pytest.approx(1.0)
