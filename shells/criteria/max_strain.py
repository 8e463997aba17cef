"""Maximum strain criterion: each material-axis strain against its allowable.

Statement (common practice; e.g. Kaw, *Mechanics of Composite Materials*,
2nd ed., 2006, sec. 2.8): failure when ε1 or −ε1 reaches the fibre tension or
compression strain limit, ε2 or −ε2 the matrix tension or compression limit, or
|γ12| the shear limit (engineering shear). The limits are the material's
``strain_limits``; each one not given is the strength over the modulus
(Xt/E1, Xc/E1, Yt/E2, Yc/E2, S12/G12: common practice). The strains follow from the
stresses by the plane-stress compliance, ε1 = (σ1 − ν12 σ2)/E1,
ε2 = σ2/E2 − ν12 σ1/E1, γ12 = τ12/G12, so the fixed stress part maps to a
fixed strain part and the criterion stays linear in R (solved exactly).
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .max_stress import limits_ratio
from .state import INF, PLY_MODES, S1, S2, T12


class MaxStrain(Criterion):
    name = "max-strain"
    title = "Maximum strain"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("E1", "E2", "G12", "nu12", "strain_fibre_tension", "strain_fibre_compression",
                             "strain_matrix_tension", "strain_matrix_compression", "strain_shear")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        e1, e2, g12, nu12 = p[P.E1], p[P.E2], p[P.G12], p[P.NU12]
        m1 = (sm[S1] - nu12 * sm[S2]) / e1
        f1 = (sf[S1] - nu12 * sf[S2]) / e1
        m2 = sm[S2] / e2 - nu12 * sm[S1] / e1
        f2 = sf[S2] / e2 - nu12 * sf[S1] / e1
        return limits_ratio(m1, f1, m2, f2, sm[T12] / g12, sf[T12] / g12,
                            p[P.STRAIN_FT], p[P.STRAIN_FC], p[P.STRAIN_MT], p[P.STRAIN_MC],
                            p[P.STRAIN_SH])
