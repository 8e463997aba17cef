"""Tsai-Hill criterion (Hill's 1948 anisotropic yield function as used for plies).

Statement (Kaw, *Mechanics of Composite Materials*, 2nd ed., 2006, sec. 2.8;
Azzi & Tsai 1965): ``(σ1/X)² − σ1σ2/X² + (σ2/Y)² + (τ12/S12)² = 1`` with
X = Xt or Xc and Y = Yt or Yc picked by the sign of σ1, σ2 *at failure*.

Along the load ray σ1 and σ2 change sign at most once each, so R is found
exactly: the ray is cut at those break points and on each piece (constant
signs, hence constant strengths) the quadratic is solved for its first root
inside the piece. Mode: the dominant term at failure (fibre, matrix, shear).
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .plane import polynomial_ratio
from .roots import break_point, sign_between
from .state import INF, PLY_MODES, S1, S2


@njit(cache=True)
def _piece(sm, sf, p, lo, hi):
    """First failure R of Tsai-Hill inside the piece [lo, hi] of constant stress signs."""
    if not hi > lo:
        return INF, -1
    x = p[P.XT] if sign_between(sf[S1], sm[S1], lo, hi) >= 0 else p[P.XC]
    y = p[P.YT] if sign_between(sf[S2], sm[S2], lo, hi) >= 0 else p[P.YC]
    f11 = 1.0 / (x * x)
    return polynomial_ratio(sm, sf, 0.0, 0.0, f11, 1.0 / (y * y), 1.0 / (p[P.S12] * p[P.S12]),
                            -0.5 * f11, lo, hi)


class TsaiHill(Criterion):
    name = "tsai-hill"
    title = "Tsai-Hill"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        b1 = break_point(sf[S1], sm[S1])
        b2 = break_point(sf[S2], sm[S2])
        ra, rb = min(b1, b2), max(b1, b2)
        r, m = _piece(sm, sf, p, 0.0, ra)
        if r == INF:
            r, m = _piece(sm, sf, p, ra, rb)
        if r == INF:
            r, m = _piece(sm, sf, p, rb, INF)
        return r, m
