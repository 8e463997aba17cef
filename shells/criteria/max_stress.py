"""Maximum stress criterion: each material-axis stress against its own strength.

Statement (common practice; e.g. Kaw, *Mechanics of Composite Materials*,
2nd ed., 2006, sec. 2.8): failure when σ1 ≥ Xt or −σ1 ≥ Xc, σ2 ≥ Yt or
−σ2 ≥ Yc, or |τ12| ≥ S12. Linear in the load factor, so solved exactly.
Transverse shear and σ3 are checked by ``interlaminar`` and
``core-crushing``. An isotropic layer uses Xt, Xc for both directions
(its property vector carries Yt = Xt, Yc = Xc).
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import INF, PLY_MODES, S1, S2, T12, Criterion, limits_ratio


class MaxStress(Criterion):
    name = "max-stress"
    title = "Maximum stress"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12"),
                P.KIND_ISOTROPIC: ("Xt", "Xc", "S12")}
    points = (0, 1, 2)

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        """Strength ratio and mode (index in ``modes``) of ``sf + R·sm``; see the module docstring."""
        kind = p[P.KIND]
        if kind != P.KIND_PLY and kind != P.KIND_ISOTROPIC:
            return INF, -1
        return limits_ratio(sm[S1], sf[S1], sm[S2], sf[S2], sm[T12], sf[T12],
                            p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12])
