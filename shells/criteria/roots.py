"""Exact root solvers along the load ray ``sf + R·sm`` (numba; LLVM inlines them into the criteria).

A criterion that is linear or quadratic in the load factor R (on a piece of
the ray where its signs are constant) is solved exactly with these helpers.
"""

from __future__ import annotations

import math

from numba import njit

from .state import INF, NSTATE


@njit(cache=True, inline="always")
def has_fixed(sf):
    """True when any component of the fixed state is non-zero."""
    for i in range(NSTATE):
        if sf[i] != 0.0:
            return True
    return False


@njit(cache=True, inline="always")
def at(sm, sf, r, i):
    """Component ``i`` of the state ``sf + r·sm`` (no allocation)."""
    return sf[i] + r * sm[i]


@njit(cache=True, forceinline=True)
def linear_ratio(f, m, upper, lower):
    """Smallest R ≥ 0 at which ``f + R·m`` reaches ``upper`` or ``-lower``.

    0 when ``f`` already lies outside ``(-lower, upper)``; inf when ``m = 0``
    or the load moves toward an infinite limit.
    """
    if f >= upper or f <= -lower:
        return 0.0
    if m > 0.0:
        return (upper - f) / m
    if m < 0.0:
        return (f + lower) / (-m)
    return INF


@njit(cache=True, forceinline=True)
def quadratic_roots(a, b, c):
    """Real roots (r1 ≤ r2) of ``a R² + b R + c = 0``; missing roots are inf.

    Uses the cancellation-free form q = −(b + sign(b)·√disc)/2.
    """
    if a == 0.0:
        if b == 0.0:
            return INF, INF
        return -c / b, INF
    disc = b * b - 4.0 * a * c
    if disc < 0.0:
        return INF, INF
    q = -0.5 * (b + math.copysign(math.sqrt(disc), b))
    if q == 0.0:
        return 0.0, 0.0
    r1 = q / a
    r2 = c / q
    if r1 <= r2:
        return r1, r2
    return r2, r1


@njit(cache=True, forceinline=True)
def first_crossing(a, b, c, lo, hi):
    """First R in ``[lo, hi]`` with ``g(R) = a R² + b R + c ≥ 0``.

    ``g`` is the criterion value minus 1 along the load ray. Returns ``lo`` when
    ``g(lo) ≥ 0`` already and inf when ``g`` stays negative on the interval.
    """
    if (a * lo + b) * lo + c >= 0.0:
        return lo
    r1, r2 = quadratic_roots(a, b, c)
    if lo < r1 <= hi:
        return r1
    if lo < r2 <= hi:
        return r2
    return INF


@njit(cache=True, forceinline=True)
def product_coeffs(gi, mi, gj, mj):
    """Coefficients (of R², R, 1) of the product (gi + R·mi)(gj + R·mj)."""
    return mi * mj, gi * mj + gj * mi, gi * gj


@njit(cache=True, forceinline=True)
def break_point(f, m):
    """R > 0 at which ``f + R·m`` changes sign, inf if it never does."""
    if m == 0.0:
        return INF
    r = -f / m
    return r if r > 0.0 else INF


@njit(cache=True, forceinline=True)
def sign_between(f, m, lo, hi):
    """Sign (−1, 0, 1) of ``f + R·m`` inside the open interval (lo, hi)."""
    mid = 2.0 * lo + 1.0 if hi == INF else 0.5 * (lo + hi)
    v = f + mid * m
    return 1 if v > 0.0 else (-1 if v < 0.0 else 0)
