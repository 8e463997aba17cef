"""Maximum stress criterion: each material-axis stress against its own strength.

Statement (common practice; e.g. Kaw, *Mechanics of Composite Materials*,
2nd ed., 2006, sec. 2.8): failure when σ1 ≥ Xt or −σ1 ≥ Xc, σ2 ≥ Yt or
−σ2 ≥ Yc, or |τ12| ≥ S12. Linear in the load factor, so solved exactly.
Transverse shear and σ3 are checked by ``interlaminar`` and
``core-crushing``.

A core with in-plane strengths (a foam, end-grain wood) is checked the same way on its own axes 1 and 2
(modes in-plane tension, in-plane compression, in-plane shear); a core without them is not checked.

An isotropic layer has no preferred axes, so it is checked on invariants
(common practice for metals): the largest in-plane principal stress against
Xt, the smallest against −Xc, and the largest shear stress of the plane-stress
state, max(|σI − σII|, |σI|, |σII|)/2 with σ3 = 0 (Tresca), against S12; modes
tension, compression, shear. Each bound is a quadratic in the load factor,
solved exactly (:mod:`shells.criteria.principal`).
"""

from __future__ import annotations

import math

from numba import njit

from .. import params as P
from .base import Criterion
from .principal import max_shear_ratio, principal_ratio
from .prepared import FAST, GENERIC, INSIDE
from .roots import linear_ratio
from .state import FC, FT, INF, ISOTROPIC_MODES, MC, MT, PLY_MODES, S1, S2, SH, T12


@njit(cache=True, forceinline=True)
def limits_ratio(m1, f1, m2, f2, m6, f6, x_t, x_c, y_t, y_c, s):
    """Exact R for independent limits on three in-plane components; mode in :data:`PLY_MODES`.

    Component 1 lies in (−x_c, x_t), 2 in (−y_c, y_t), 12 in (−s, s); each
    is ``f + R·m``. The smallest R governs (ties: fibre, then matrix, then
    shear); the mode's sign is that of the component at failure.
    """
    r1 = linear_ratio(f1, m1, x_t, x_c)
    r2 = linear_ratio(f2, m2, y_t, y_c)
    r6 = linear_ratio(f6, m6, s, s)
    if r1 == INF and r2 == INF and r6 == INF:
        return INF, -1
    if r1 <= r2 and r1 <= r6:
        return r1, (FT if f1 + r1 * m1 >= 0.0 else FC)
    if r2 <= r6:
        return r2, (MT if f2 + r2 * m2 >= 0.0 else MC)
    return r6, SH


@njit(cache=True, forceinline=True)
def limits_inside(m1, f1, m2, f2, m6, f6, x_t, x_c, y_t, y_c, s, lam):
    """Whether the limits of :func:`limits_ratio` hold, by the margin INSIDE, at ``f`` and ``f + lam·m``: then
    (a box is convex) R exceeds ``lam``. False when it cannot tell."""
    k = 1.0 - INSIDE
    e1, e2, e6 = f1 + lam * m1, f2 + lam * m2, f6 + lam * m6
    return (lam < INF and -k * x_c < f1 < k * x_t and -k * x_c < e1 < k * x_t and -k * y_c < f2 < k * y_t
            and -k * y_c < e2 < k * y_t and abs(f6) < k * s and abs(e6) < k * s)


#: Mode indices of an isotropic layer (after the ply modes).
ISO_TENSION, ISO_COMPRESSION, ISO_SHEAR = range(len(PLY_MODES), len(PLY_MODES) + len(ISOTROPIC_MODES))
#: Modes of a core's in-plane check (after the isotropic ones); its shear is the ply mode "in-plane shear".
CORE_MODES = ("in-plane tension", "in-plane compression")
CORE_TENSION, CORE_COMPRESSION = range(len(PLY_MODES) + len(ISOTROPIC_MODES),
                                       len(PLY_MODES) + len(ISOTROPIC_MODES) + len(CORE_MODES))


@njit(cache=True)
def isotropic_ratio(sm, sf, x_t, x_c, s):
    """Exact R of the invariant maximum-stress check of an isotropic layer; mode ISO_* or -1."""
    rt = principal_ratio(sm, sf, x_t, 1.0)
    rc = principal_ratio(sm, sf, x_c, -1.0)
    rs = max_shear_ratio(sm, sf, s)
    if rt == INF and rc == INF and rs == INF:
        return INF, -1
    if rt <= rc and rt <= rs:
        return rt, ISO_TENSION
    if rc <= rs:
        return rc, ISO_COMPRESSION
    return rs, ISO_SHEAR


class MaxStress(Criterion):
    name = "max-stress"
    title = "Maximum stress"
    modes = PLY_MODES + ISOTROPIC_MODES + CORE_MODES
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12"),
                P.KIND_ISOTROPIC: ("Xt", "Xc", "S12"),
                P.KIND_CORE: ()}
    convex = True      # a box in (σ1, σ2, τ12); on invariants, principal stresses and Tresca: convex too

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        kind = p[P.KIND]
        if kind == P.KIND_ISOTROPIC:
            return isotropic_ratio(sm, sf, p[P.XT], p[P.XC], p[P.S12])
        if kind == P.KIND_CORE:
            if math.isnan(p[P.XT]):
                return INF, -1
            r, m = limits_ratio(sm[S1], sf[S1], sm[S2], sf[S2], sm[T12], sf[T12],
                                p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12])
            if m == FT or m == MT:
                return r, CORE_TENSION
            if m == FC or m == MC:
                return r, CORE_COMPRESSION
            return r, m
        if kind != P.KIND_PLY:
            return INF, -1
        return limits_ratio(sm[S1], sf[S1], sm[S2], sf[S2], sm[T12], sf[T12],
                            p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12])

    @staticmethod
    @njit(cache=True)
    def prepare(p, out):
        if p[P.KIND] != P.KIND_PLY:     # isotropic layers and cores: the point-by-point ratio
            return GENERIC
        out[0], out[1], out[2], out[3], out[4] = p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12]
        return FAST

    @staticmethod
    @njit(cache=True, inline="always")
    def point(sm, sf, c, m):
        return limits_ratio(sm[S1], sf[S1], sm[S2], sf[S2], sm[T12], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                            c[m, 4])

    @staticmethod
    @njit(cache=True, inline="always")
    def inside(sm, sf, c, m, lam):
        return limits_inside(sm[S1], sf[S1], sm[S2], sf[S2], sm[T12], sf[T12], c[m, 0], c[m, 1], c[m, 2], c[m, 3],
                             c[m, 4], lam)
