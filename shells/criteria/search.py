"""Bracketed search for the strength ratio of criteria with no closed form (Puck, LaRC03).

The criterion supplies an exposure f (failure at f = 1, written as a degree-1
form where possible). With no fixed part and an exposure homogeneous of degree
1 along the load, R = 1/f(sm) exactly. Otherwise the failing side is bracketed
by halving or doubling from R = 1, [0, hi] is scanned in 16 steps for the first
failing point and that bracket is bisected to a relative width of 1e-15 (the
failing end is returned). See docs/criteria.md.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .state import INF

# Bracketed root search by reverse communication: the loop (searched_ratio, at the end) calls the criterion's
# exposure between steps of the search state:
#
#     st = search_start(homogeneous)
#     while not search_done(st):
#         f, m = exposure(state at search_point(st))
#         st = search_next(st, f)
#     return search_result(st, m)
#
# The state is (phase, lo, hi, k, r): r is the load factor to evaluate next.
_START, _HOMOG, _FIRST, _DOWN, _UP, _SCAN, _BISECT, _DONE = range(8)
_NSCAN = 16


@njit(cache=True)
def search_start(homogeneous):
    """Initial state of the bracketed search (first point R = 0).

    ``homogeneous``: the exposure is of degree 1 in stress along this ray with
    no fixed part, so R = 1/f(R=1) exactly and no search is made.
    """
    return (float(_START), 0.0, 0.0, 1.0 if homogeneous else 0.0, 0.0)


@njit(cache=True)
def search_done(st):
    return st[0] == _DONE


@njit(cache=True)
def search_point(st):
    """The load factor to evaluate next (0 in place of a non-finite final answer)."""
    r = st[4]
    return r if math.isfinite(r) else 0.0


@njit(cache=True)
def search_result(st, mode):
    """(R, mode) of a finished search; mode -1 when R is inf or NaN."""
    r = st[4]
    return (r, mode) if math.isfinite(r) else (r, -1)


@njit(cache=True)
def _scan_or_bisect(lo, hi):
    if hi - lo <= 1e-15 * hi:
        return (float(_DONE), lo, hi, 0.0, hi)
    return (float(_BISECT), lo, hi, 0.0, 0.5 * (lo + hi))


@njit(cache=True)
def search_next(st, f):
    """Advance the search given the exposure ``f`` (failure at f ≥ 1) at the state's point.

    Strategy: R = 0 failing gives 0; the homogeneous case gives 1/f(1);
    otherwise the failing side is bracketed by halving or doubling from R = 1,
    [0, hi] is scanned in 16 steps for the first point that fails and that
    bracket is bisected to a relative width of 1e-15 (the failing end is
    returned). A crossing narrower than a scan step can be missed; a convex
    exposure crosses once. NaN exposures give R = NaN.
    """
    phase, lo, hi, k, r = st
    if f != f:
        return (float(_DONE), 0.0, 0.0, 0.0, np.nan)
    if phase == _START:
        if f >= 1.0:
            return (float(_DONE), 0.0, 0.0, 0.0, 0.0)
        if k == 1.0:
            return (float(_HOMOG), 0.0, 0.0, 0.0, 1.0)
        return (float(_FIRST), 0.0, 1.0, 0.0, 1.0)
    if phase == _HOMOG:
        return (float(_DONE), 0.0, 0.0, 0.0, INF if f <= 0.0 else 1.0 / f)
    if phase == _FIRST:
        if f >= 1.0:
            return (float(_DOWN), 0.0, 1.0, 0.0, 0.5)
        return (float(_UP), 0.0, 2.0, 0.0, 2.0)
    if phase == _DOWN:
        if f >= 1.0 and k < 1100.0:
            return (float(_DOWN), 0.0, r, k + 1.0, 0.5 * r)
        return (float(_SCAN), 0.0, hi, 1.0, hi / _NSCAN)
    if phase == _UP:
        if f >= 1.0:
            return (float(_SCAN), 0.0, r, 1.0, r / _NSCAN)
        if r > 1e300:
            return (float(_DONE), 0.0, 0.0, 0.0, INF)
        return (float(_UP), 0.0, 2.0 * r, 0.0, 2.0 * r)
    if phase == _SCAN:
        if f >= 1.0 or k >= _NSCAN:
            return _scan_or_bisect(lo, r)
        return (float(_SCAN), r, hi, k + 1.0, hi if k + 1.0 >= _NSCAN else hi * (k + 1.0) / _NSCAN)
    # bisection
    if f >= 1.0:
        return _scan_or_bisect(lo, r)
    return _scan_or_bisect(r, hi)


@njit(forceinline=True)
def searched_ratio(exposure, m1, m2, m6, g1, g2, g6, homogeneous, c):
    """Strength ratio and mode along ``g + R·m`` (σ1, σ2, τ12) of a criterion given by its ``exposure(σ1, σ2, |τ12|,
    c) -> (f, mode)``; ``homogeneous``: R = 1/f in closed form, else searched. Not cached itself (it takes a
    compiled function as an argument); the criterion's cached ``ratio`` calls it and LLVM inlines it there."""
    st, m = search_start(homogeneous), -1       # the first point is R = 0
    while not search_done(st):
        f, m = exposure(g1 + search_point(st) * m1, g2 + search_point(st) * m2, abs(g6 + search_point(st) * m6), c)
        st = search_next(st, f)
    return search_result(st, m)
