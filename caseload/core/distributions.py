"""Whole-day probability masses of a Student's t length, in pure Python.

The predictive distribution of a Bayesian normal model whose mean and variance are both learnt
from the data is Student's t; it becomes the normal as the history grows.
"""

from __future__ import annotations

import math
from functools import lru_cache

# Masses are kept within this many scale units of the centre, then renormalised.
SUPPORT_SCALES = 10.0
_MAX_TERMS = 400
_TINY = 1e-300


def _beta_fraction(a: float, b: float, x: float) -> float:
    """Continued fraction of the incomplete beta function (modified Lentz). Each step takes its even
    and its odd term written out, not in an inner loop: it runs some 80 times per forecast."""
    qab, qap, qam = a + b, a + 1.0, a - 1.0
    c, d = 1.0, 1.0 - qab * x / qap
    d = 1.0 / (d if abs(d) > _TINY else _TINY)
    h = d
    for m in range(1, _MAX_TERMS + 1):
        m2 = 2 * m
        even = m * (b - m) * x / ((qam + m2) * (a + m2))
        d = 1.0 + even * d
        d = 1.0 / (d if abs(d) > _TINY else _TINY)
        c = 1.0 + even / c
        c = c if abs(c) > _TINY else _TINY
        h *= d * c
        odd = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2))
        d = 1.0 + odd * d
        d = 1.0 / (d if abs(d) > _TINY else _TINY)
        c = 1.0 + odd / c
        c = c if abs(c) > _TINY else _TINY
        h *= d * c
        if abs(d * c - 1.0) < 1e-14:
            break
    return h


def regularized_beta(a: float, b: float, x: float) -> float:
    """I_x(a, b), the regularized incomplete beta function."""
    if x <= 0.0:
        return 0.0
    if x >= 1.0:
        return 1.0
    log_front = math.lgamma(a + b) - math.lgamma(a) - math.lgamma(b) + a * math.log(x) + b * math.log1p(-x)
    front = math.exp(log_front)
    if x < (a + 1.0) / (a + b + 2.0):
        return front * _beta_fraction(a, b, x) / a
    return 1.0 - front * _beta_fraction(b, a, 1.0 - x) / b


def _tail(z: float, dof: float) -> float:
    """P(T <= -|z|): one incomplete beta gives the lower tail on both sides of zero."""
    return 0.5 * regularized_beta(dof / 2.0, 0.5, dof / (dof + z * z)) if z != 0.0 else 0.5


def _lower(z: float, tail: float) -> float:
    """P(T <= z) from `tail` = P(T <= -|z|), accurate far into the lower tail."""
    if z == 0.0:
        return 0.5
    return tail if z < 0 else 1.0 - tail


def _between(lo: float, hi: float, lo_tail: float, hi_tail: float) -> float:
    """P(lo < T <= hi), taken on the side of zero that keeps precision."""
    if lo >= 0.0:
        return max(_lower(-lo, lo_tail) - _lower(-hi, hi_tail), 0.0)
    return max(_lower(hi, hi_tail) - _lower(lo, lo_tail), 0.0)


@lru_cache(maxsize=4096)
def day_masses(centre: float, scale: float, dof: float, first_day: int = 1) -> tuple[int, tuple[float, ...]]:
    """(first day, masses) of a t length rounded to whole days, from `first_day` on, summing to 1.

    Day k takes the mass between k - 0.5 and k + 0.5.
    """
    lo = max(first_day, math.floor(centre - SUPPORT_SCALES * scale))
    hi = max(lo, math.ceil(centre + SUPPORT_SCALES * scale))
    # Neighbouring days share an edge, so each edge's tail is computed once.
    edges = [(k - 0.5 - centre) / scale for k in range(lo, hi + 2)]
    tails = [_tail(z, dof) for z in edges]
    masses = [_between(edges[i], edges[i + 1], tails[i], tails[i + 1]) for i in range(hi - lo + 1)]
    total = math.fsum(masses)
    if total <= 0.0:
        nearest = min(max(round(centre), lo), hi)
        masses = [1.0 if k == nearest else 0.0 for k in range(lo, hi + 1)]
        total = 1.0
    return lo, tuple(m / total for m in masses)
