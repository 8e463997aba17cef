"""Tsai-Wu tensor polynomial criterion (plane stress).

Statement (Tsai & Wu, J. Composite Materials 5 (1971) 58–80):
``F1σ1 + F2σ2 + F11σ1² + F22σ2² + F66τ12² + 2F12σ1σ2 = 1`` with
F1 = 1/Xt − 1/Xc, F11 = 1/(Xt·Xc), F2 = 1/Yt − 1/Yc, F22 = 1/(Yt·Yc),
F66 = 1/S12², F12 = F12* · sqrt(F11·F22) (F12* = p[F12STAR], −½ by common
practice). Quadratic in the load factor: solved exactly. Mode: the dominant
term at failure (fibre F1σ1 + F11σ1², matrix F2σ2 + F22σ2², shear F66τ12²).
"""

from __future__ import annotations

import math

from numba import njit

from .. import params as P
from .base import Criterion
from .prepared import FAST, SKIP
from .plane import plane_inside, plane_ratio, plane_strengths, polynomial_ratio
from .state import INF, PLY_MODES, S1, S2, T12


@njit(cache=True)
def tsai_wu_strengths(p):
    """(F1, F2, F11, F22, F66, F12) of a ply."""
    f1, f2, f11, f22, f66 = plane_strengths(p)
    return f1, f2, f11, f22, f66, p[P.F12STAR] * math.sqrt(f11 * f22)


class TsaiWu(Criterion):
    name = "tsai-wu"
    title = "Tsai-Wu"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12", "F12star")}

    convex = True      # when F12² ≤ F11·F22, i.e. |F12*| ≤ 1 (checked per table by convex_for)

    @classmethod
    def convex_for(cls, params):
        import numpy as np

        ply = params[:, P.KIND] == P.KIND_PLY
        return bool(np.all(np.abs(params[ply, P.F12STAR]) <= 1.0))

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        f1, f2, f11, f22, f66, f12 = tsai_wu_strengths(p)
        return polynomial_ratio(sm, sf, f1, f2, f11, f22, f66, f12, 0.0, INF)

    @staticmethod
    @njit(cache=True)
    def prepare(p, out):
        if p[P.KIND] != P.KIND_PLY:
            return SKIP
        out[0], out[1], out[2], out[3], out[4], out[5] = tsai_wu_strengths(p)
        return FAST

    @staticmethod
    @njit(cache=True, inline="always")
    def point(sm, sf, c, m):
        return plane_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                           c[m, 4], c[m, 5], 0.0, INF)

    @staticmethod
    @njit(cache=True, inline="always")
    def inside(sm, sf, c, m, lam):
        return plane_inside(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                            c[m, 4], c[m, 5], lam)
