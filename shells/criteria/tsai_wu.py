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
from .plane import plane_strengths, polynomial_ratio
from .state import INF, PLY_MODES


class TsaiWu(Criterion):
    name = "tsai-wu"
    title = "Tsai-Wu"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12", "F12star")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        f1, f2, f11, f22, f66 = plane_strengths(p)
        f12 = p[P.F12STAR] * math.sqrt(f11 * f22)
        return polynomial_ratio(sm, sf, f1, f2, f11, f22, f66, f12, 0.0, INF)
