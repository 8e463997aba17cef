"""Hoffman criterion (plane stress, transversely isotropic ply).

Statement (Hoffman, J. Composite Materials 1 (1967) 200–206), σ3 = 0 and
Zt = Yt, Zc = Yc: ``σ1²/(Xt·Xc) − σ1σ2/(Xt·Xc) + σ2²/(Yt·Yc)
+ (1/Xt − 1/Xc)σ1 + (1/Yt − 1/Yc)σ2 + τ12²/S12² = 1``, i.e. the Tsai-Wu form
with F12 = −1/(2·Xt·Xc). Quadratic in the load factor: solved exactly. Mode:
the dominant term at failure, as for Tsai-Wu.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .plane import plane_strengths, polynomial_ratio
from .state import INF, PLY_MODES


class Hoffman(Criterion):
    name = "hoffman"
    title = "Hoffman"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        f1, f2, f11, f22, f66 = plane_strengths(p)
        return polynomial_ratio(sm, sf, f1, f2, f11, f22, f66, -0.5 * f11, 0.0, INF)
