"""Sandwich core shear: ribbon (13) and transverse (23) shear against the core strengths.

Statement (common practice for honeycomb and foam cores; e.g. Zenkert,
*An Introduction to Sandwich Construction*, 1995, ch. 9):
``(τ13/S13)² + (τ23/S23)² = 1`` with S13 = p[CORE_S13] (ribbon, L) and
S23 = p[CORE_S23] (transverse, W). The core shear stress itself is about Q/d
(:func:`shells.sandwich.core_shear_stress`). Quadratic in the load factor:
solved exactly. Mode: the larger term at failure.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import at, first_crossing
from .state import INF, T13, T23


@njit(cache=True)
def shear_pair_ratio(sm, sf, s13, s23):
    """Exact R for ``(τ13/S13)² + (τ23/S23)² = 1``; mode 0 (13) or 1 (23), the larger term."""
    a13, a23 = 1.0 / (s13 * s13), 1.0 / (s23 * s23)
    m13, m23, g13, g23 = sm[T13], sm[T23], sf[T13], sf[T23]
    a = a13 * m13 * m13 + a23 * m23 * m23
    b = 2.0 * (a13 * g13 * m13 + a23 * g23 * m23)
    c = a13 * g13 * g13 + a23 * g23 * g23 - 1.0
    r = first_crossing(a, b, c, 0.0, INF)
    if r == INF:
        return INF, -1
    t13, t23 = at(sm, sf, r, T13), at(sm, sf, r, T23)
    return r, (0 if a13 * t13 * t13 >= a23 * t23 * t23 else 1)


class CoreShear(Criterion):
    name = "core-shear"
    title = "Core shear"
    modes = ("ribbon shear (13)", "transverse shear (23)")
    requires = {P.KIND_CORE: ("core_S13", "core_S23")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_CORE:
            return INF, -1
        return shear_pair_ratio(sm, sf, p[P.CORE_S13], p[P.CORE_S23])
