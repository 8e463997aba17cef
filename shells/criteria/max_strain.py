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
from .prepared import FAST, SKIP
from .max_stress import limits_inside, limits_ratio
from .state import INF, PLY_MODES, S1, S2, T12


@njit(cache=True, forceinline=True)
def strain_ratio(m1, m2, m6, g1, g2, g6, e1, e2, g12, nu12, l_ft, l_fc, l_mt, l_mc, l_sh):
    """Exact R of the strain limits for the stresses ``g + R·m`` (compliance strains of each part)."""
    return limits_ratio((m1 - nu12 * m2) / e1, (g1 - nu12 * g2) / e1, m2 / e2 - nu12 * m1 / e1,
                        g2 / e2 - nu12 * g1 / e1, m6 / g12, g6 / g12, l_ft, l_fc, l_mt, l_mc, l_sh)


@njit(cache=True, forceinline=True)
def strain_inside(m1, m2, m6, g1, g2, g6, e1, e2, g12, nu12, l_ft, l_fc, l_mt, l_mc, l_sh, lam):
    """Whether the strain limits hold, by the margin INSIDE, at ``g`` and ``g + lam·m`` (R exceeds ``lam``)."""
    return limits_inside((m1 - nu12 * m2) / e1, (g1 - nu12 * g2) / e1, m2 / e2 - nu12 * m1 / e1,
                         g2 / e2 - nu12 * g1 / e1, m6 / g12, g6 / g12, l_ft, l_fc, l_mt, l_mc, l_sh, lam)


class MaxStrain(Criterion):
    name = "max-strain"
    title = "Maximum strain"
    modes = PLY_MODES
    requires = {P.KIND_PLY: ("E1", "E2", "G12", "nu12", "strain_fibre_tension", "strain_fibre_compression",
                             "strain_matrix_tension", "strain_matrix_compression", "strain_shear")}

    convex = True      # a box in strain, a linear image of the stresses

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        return strain_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], p[P.E1], p[P.E2], p[P.G12],
                            p[P.NU12], p[P.STRAIN_FT], p[P.STRAIN_FC], p[P.STRAIN_MT], p[P.STRAIN_MC],
                            p[P.STRAIN_SH])

    @staticmethod
    @njit(cache=True)
    def prepare(p, out):
        if p[P.KIND] != P.KIND_PLY:
            return SKIP
        for k, i in enumerate((P.E1, P.E2, P.G12, P.NU12, P.STRAIN_FT, P.STRAIN_FC, P.STRAIN_MT, P.STRAIN_MC,
                               P.STRAIN_SH)):
            out[k] = p[i]
        return FAST

    @staticmethod
    @njit(cache=True, inline="always")
    def point(sm, sf, c, m):
        return strain_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                            c[m, 4], c[m, 5], c[m, 6], c[m, 7], c[m, 8])

    @staticmethod
    @njit(cache=True, inline="always")
    def inside(sm, sf, c, m, lam):
        return strain_inside(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                             c[m, 4], c[m, 5], c[m, 6], c[m, 7], c[m, 8], lam)
