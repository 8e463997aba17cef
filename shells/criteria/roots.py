"""Exact root solvers along the load ray ``sf + R·sm`` (numba, inlined into the criteria).

A criterion that is linear or quadratic in the load factor R (on a piece of
the ray where its signs are constant) is solved exactly with these helpers.
They are written without branches (every case computed, the answer selected),
so that a loop over many ply points calling them is vectorised by the compiler,
and with numpy's error model (a division by zero gives inf or NaN, never an
exception: such values are never selected).
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


@njit(cache=True, error_model="numpy")
def linear_ratio(f, m, upper, lower):
    """Smallest R ≥ 0 at which ``f + R·m`` reaches ``upper`` or ``-lower``.

    0 when ``f`` already lies outside ``(-lower, upper)``; inf when ``m = 0``
    or the load moves toward an infinite limit.
    """
    pos = m > 0.0
    r = (upper - f if pos else f + lower) / (m if pos else -m)
    r = r if (pos or m < 0.0) else INF
    return 0.0 if (f >= upper or f <= -lower) else r


@njit(cache=True, error_model="numpy")
def quadratic_roots(a, b, c):
    """Real roots (r1 ≤ r2) of ``a R² + b R + c = 0``; missing roots are inf.

    Uses the cancellation-free form q = −(b + sign(b)·√disc)/2.
    """
    disc = b * b - 4.0 * a * c
    q = -0.5 * (b + math.copysign(math.sqrt(disc), b))
    u, v = q / a, c / q
    swap = not u <= v
    r1, r2 = (v if swap else u), (u if swap else v)
    zero = q == 0.0
    r1, r2 = (0.0 if zero else r1), (0.0 if zero else r2)
    neg = disc < 0.0
    r1, r2 = (INF if neg else r1), (INF if neg else r2)
    flat = a == 0.0
    r1, r2 = (-c / b if flat else r1), (INF if flat else r2)
    return (INF if (flat and b == 0.0) else r1), r2


@njit(cache=True, error_model="numpy")
def first_crossing(a, b, c, lo, hi):
    """First R in ``[lo, hi]`` with ``g(R) = a R² + b R + c ≥ 0``.

    ``g`` is the criterion value minus 1 along the load ray. Returns ``lo`` when
    ``g(lo) ≥ 0`` already and inf when ``g`` stays negative on the interval.
    """
    r1, r2 = quadratic_roots(a, b, c)
    r = r1 if (lo < r1 and r1 <= hi) else (r2 if (lo < r2 and r2 <= hi) else INF)
    return lo if (a * lo + b) * lo + c >= 0.0 else r


@njit(cache=True, inline="always")
def product_coeffs(gi, mi, gj, mj):
    """Coefficients (of R², R, 1) of the product (gi + R·mi)(gj + R·mj)."""
    return mi * mj, gi * mj + gj * mi, gi * gj


@njit(cache=True, error_model="numpy")
def break_point(f, m):
    """R > 0 at which ``f + R·m`` changes sign, inf if it never does."""
    r = INF if m == 0.0 else -f / m
    return r if r > 0.0 else INF


@njit(cache=True, error_model="numpy")
def sign_between(f, m, lo, hi):
    """Sign (−1, 0, 1) of ``f + R·m`` inside the open interval (lo, hi)."""
    v = f + (2.0 * lo + 1.0 if hi == INF else 0.5 * (lo + hi)) * m
    return 1 if v > 0.0 else (-1 if v < 0.0 else 0)
