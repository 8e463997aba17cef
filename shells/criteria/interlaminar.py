"""Interlaminar shear at the ply faces.

Statement (common practice): ``(τ13/S13)² + (τ23/S23)² = 1`` at the bottom
and top of a ply, with S13 = p[S13] and S23 = p[S23]; either one that is not
defined falls back to the interlaminar shear strength p[ILSS] (typically from
a short-beam test). Quadratic in the load factor: solved exactly. Mode: the
larger term at failure. An isotropic layer has no preferred axes: the resultant
sqrt(τ13² + τ23²) is checked against the smaller of its two allowables (mode
"transverse shear"), which does not depend on the layer's angle.
"""

from __future__ import annotations

import math

from numba import njit

from .. import params as P
from .base import Criterion
from .core_shear import shear_pair_ratio
from .state import INF


class Interlaminar(Criterion):
    name = "interlaminar"
    title = "Interlaminar shear"
    modes = ("interlaminar shear 13", "interlaminar shear 23", "transverse shear")
    requires = {P.KIND_PLY: ("S13|ilss", "S23|ilss"), P.KIND_ISOTROPIC: ("S13|ilss", "S23|ilss")}
    points = (0, 2)

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        kind = p[P.KIND]
        if kind != P.KIND_PLY and kind != P.KIND_ISOTROPIC:
            return INF, -1
        s13, s23 = p[P.S13], p[P.S23]
        if math.isnan(s13):
            s13 = p[P.ILSS]
        if math.isnan(s23):
            s23 = p[P.ILSS]
        if kind == P.KIND_ISOTROPIC:
            # No preferred axes: the resultant transverse shear sqrt(τ13² + τ23²) against one allowable.
            s = min(s13, s23)
            r, m = shear_pair_ratio(sm, sf, s, s)
            return (r, 2) if m >= 0 else (r, m)
        return shear_pair_ratio(sm, sf, s13, s23)
