"""Cycle statistics over the recent complete cycles."""

import statistics

import pytest
from hypothesis import given
from hypothesis import strategies as st

from caseload.core.stats import cycle_stats


def test_figures_of_three_cycles():
    s = cycle_stats([26, 28, 31], [4, 5, 9])
    assert (s.count, s.shortest, s.longest, s.variation) == (3, 26, 31, 5)
    assert s.mean == pytest.approx(28.33, abs=0.01)
    # Sample SD (n - 1) as stdlib statistics.stdev: sqrt((2.33^2 + 0.33^2 + 2.67^2) / 2) = 2.52.
    assert s.sd == pytest.approx(statistics.stdev([26, 28, 31]), abs=0.01)
    assert s.sd == pytest.approx(2.52, abs=0.01)
    assert s.median == 28 and s.bleed_median == 5


def test_one_cycle_has_no_sd_and_none_has_no_figures():
    assert cycle_stats([29], [5]).sd is None
    empty = cycle_stats([], [])
    assert empty.count == 0 and empty.mean is None and empty.variation is None


@given(st.lists(st.integers(min_value=10, max_value=400), min_size=2, max_size=36))
def test_the_sd_is_the_standard_librarys(lengths):
    # Reference: statistics.stdev (exact fractions, correctly rounded); to 2 dp as the stats keep it.
    assert cycle_stats(lengths, [5] * len(lengths)).sd == round(statistics.stdev(lengths), 2)
