"""LaRC03 criterion for a unidirectional ply in plane stress (fibre and matrix, tension and compression).

Statement (Dávila, Camanho & Rose, J. Composite Materials 39 (2005) 323–345;
NASA/TM-2003-212663). Inputs: Xt, Xc, Yc, S12, G12, ν12, the fracture angle of
pure transverse compression α0 = p[ALPHA0] (rad), and the (possibly in-situ)
strengths Y_T = p[YT_IS], S_L = p[S12_IS]. Derived, as in the paper:
``η_T = −1/tan 2α0``, ``S_T = Yc·cos α0·(sin α0 + cos α0/tan 2α0)``,
``η_L = −S12·cos 2α0/(Yc·cos² α0)``.

- matrix tension, σ2 ≥ 0 (LaRC03 #1): ``(σ2/Y_T)² + (τ12/S_L)² = 1``;
- matrix compression, σ2 < 0 (#2; #6 with the misalignment-frame stresses when
  σ1 < −Yc): ``(τ_T/S_T)² + (τ_L/S_L)² = 1`` with
  ``τ_T = <−σ2·cos α·(sin α − η_T cos α)>``, ``τ_L = <cos α·(|τ12| + η_L σ2 cos α)>``,
  maximised over the fracture angle 0 ≤ α ≤ α0 (coarse scan + golden section);
- fibre tension, σ1 ≥ 0 (#3): ``ε1/ε1t = (σ1 − ν12σ2)/Xt = 1``;
- fibre compression, σ1 < 0 (#4 / #5): stresses in the misalignment frame,
  ``φ = (|τ12| + (G12 − Xc)φc)/(G12 + σ1 − σ2)``, φc from the paper's closed
  form; ``<|τ12m| + η_L σ2m>/S_L = 1`` when σ2m < 0, else the matrix-tension
  form on (σ2m, τ12m).

Where the papers leave a choice open: the fracture toughness ratio g = G_Ic/G_IIc of #1 and
#5 is not in the property vector and is taken as 1 (quadratic interaction).
Exposures are written as degree-1 forms (square roots of the quadratic
indices, failure at 1). With no fixed part and σ1 ≥ 0 along the load
they are homogeneous, so R = 1/exposure exactly; otherwise (misalignment angle
depends on G12, fixed part) R comes from the bracketed search
:func:`shells.criteria.search.search_next`.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .. import params as P
from .base import Criterion
from .prepared import FAST, SKIP
from .roots import has_fixed
from .search import searched_ratio
from .state import INF, PLY_MODES, S1, S2, T12

_GOLD = 0.5 * (math.sqrt(5.0) - 1.0)


@njit(cache=True)
def _plane_index(s2, t, alpha, eta_t, eta_l, s_t, s_l):
    """Quadratic matrix-compression index on the fracture plane at angle ``alpha``."""
    ca, sa = math.cos(alpha), math.sin(alpha)
    tt = max(0.0, -s2 * ca * (sa - eta_t * ca))
    tl = max(0.0, ca * (t + eta_l * s2 * ca))
    return (tt / s_t) ** 2 + (tl / s_l) ** 2


@njit(cache=True)
def _matrix_compression(s2, t, alpha0, eta_t, eta_l, s_t, s_l):
    """Exposure sqrt(max over 0 ≤ α ≤ α0 of the plane index); ``t`` = |τ12|."""
    n = 8
    best, kb = -1.0, 0
    for k in range(n + 1):
        v = _plane_index(s2, t, alpha0 * k / n, eta_t, eta_l, s_t, s_l)
        if v > best:
            best, kb = v, k
    lo, hi = alpha0 * max(kb - 1, 0) / n, alpha0 * min(kb + 1, n) / n
    x1, x2 = hi - _GOLD * (hi - lo), lo + _GOLD * (hi - lo)
    v1 = _plane_index(s2, t, x1, eta_t, eta_l, s_t, s_l)
    v2 = _plane_index(s2, t, x2, eta_t, eta_l, s_t, s_l)
    for _ in range(34):
        if v1 >= v2:
            hi, x2, v2 = x2, x1, v1
            x1 = hi - _GOLD * (hi - lo)
            v1 = _plane_index(s2, t, x1, eta_t, eta_l, s_t, s_l)
        else:
            lo, x1, v1 = x1, x2, v2
            x2 = lo + _GOLD * (hi - lo)
            v2 = _plane_index(s2, t, x2, eta_t, eta_l, s_t, s_l)
    return math.sqrt(max(best, v1, v2))


#: Constants of a ply (:func:`larc03_constants`): α0, Yc, Y_T, S_L, Xt, Xc, ν12, G12, η_T, S_T, η_L, φc.
NLARC = 12


@njit(cache=True, error_model="numpy")
def larc03_constants(p, out):
    """The ply's constants (see :data:`NLARC`) into ``out``, computed once: η_T, S_T, η_L and the
    misalignment angle φc of pure axial compression follow from α0, Yc, S12, S_L and Xc alone."""
    a0, yc, s_l = p[P.ALPHA0], p[P.YC], p[P.S12_IS]
    eta_l = -p[P.S12] * math.cos(2.0 * a0) / (yc * math.cos(a0) ** 2)
    q = s_l / p[P.XC]
    out[0], out[1], out[2], out[3] = a0, yc, p[P.YT_IS], s_l
    out[4], out[5], out[6], out[7] = p[P.XT], p[P.XC], p[P.NU12], p[P.G12]
    out[8] = -1.0 / math.tan(2.0 * a0)
    out[9] = yc * math.cos(a0) * (math.sin(a0) + math.cos(a0) / math.tan(2.0 * a0))
    out[10] = eta_l
    out[11] = math.atan((1.0 - math.sqrt(max(0.0, 1.0 - 4.0 * (q + eta_l) * q))) / (2.0 * (q + eta_l)))


@njit(cache=True)
def _misaligned(s1, s2, t, g12, xc, phic):
    """(σ2m, τ12m) in the fibre-misalignment frame; ``t`` = |τ12|. NaN pair when the kink is unstable."""
    den = g12 + s1 - s2
    if not den > 0.0:
        return np.nan, np.nan
    phi = (t + (g12 - xc) * phic) / den
    c, s = math.cos(phi), math.sin(phi)
    return (s1 * s * s + s2 * c * c - 2.0 * t * s * c,
            -s1 * s * c + s2 * s * c + t * (c * c - s * s))


@njit(cache=True)
def exposure(s1, s2, t, c):
    """LaRC03 exposure (failure at 1) and mode index at (σ1, σ2, |τ12| = ``t``), ply constants ``c``."""
    a0, yc, y_t, s_l, eta_t, s_t, eta_l = c[0], c[1], c[2], c[3], c[8], c[9], c[10]
    s2m, t2m = s2, t
    if s1 < 0.0:
        s2m, t2m = _misaligned(s1, s2, t, c[7], c[5], c[11])
        if s2m != s2m:
            return INF, 1
        t2m = abs(t2m)
    # fibre modes
    if s1 >= 0.0:
        ff, fm = max(0.0, (s1 - c[6] * s2) / c[4]), 0
    elif s2m < 0.0:
        ff, fm = max(0.0, t2m + eta_l * s2m) / s_l, 1
    else:
        ff, fm = math.sqrt((s2m / y_t) ** 2 + (t2m / s_l) ** 2), 1
    # matrix modes
    if s2 >= 0.0:
        fmx, mm = math.sqrt((s2 / y_t) ** 2 + (t / s_l) ** 2), 2
    elif s1 >= -yc:
        fmx, mm = _matrix_compression(s2, t, a0, eta_t, eta_l, s_t, s_l), 3
    else:
        fmx, mm = _matrix_compression(s2m, t2m, a0, eta_t, eta_l, s_t, s_l), 3
    if ff >= fmx:
        return ff, fm
    return fmx, mm


@njit(cache=True)
def larc03_ratio(m1, m2, m6, g1, g2, g6, homogeneous, c):
    """Strength ratio and mode along ``g + R·m`` (σ1, σ2, τ12); ``homogeneous``: σ1 ≥ 0 along the load and no
    fixed part at all (R in closed form), else searched."""
    return searched_ratio(exposure, m1, m2, m6, g1, g2, g6, homogeneous, c)


@njit(cache=True)
def larc03_prepare(p, out):
    """The prepared form of a ply (:mod:`shells.criteria.prepared`): its constants, or SKIP off plies."""
    ply = p[P.KIND] == P.KIND_PLY
    if ply:
        larc03_constants(p, out)
    return FAST if ply else SKIP


@njit(cache=True)
def larc03_point(sm, sf, c, m):
    """(R, mode) at a point with the ply's constants in row ``m`` of ``c``; R in closed form when σ1 ≥ 0 along
    the load and nothing is fixed."""
    return larc03_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], sm[S1] >= 0.0 and not has_fixed(sf),
                        c[m])


class LaRC03(Criterion):
    name = "larc03"
    title = "LaRC03 (Dávila, Camanho & Rose 2005)"
    modes = PLY_MODES[:4]
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yc", "S12", "G12", "nu12", "alpha0", "YT_is", "S12_is")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        c = np.empty((1, NLARC))
        return larc03_point(sm, sf, c, 0) if larc03_prepare(p, c[0]) == FAST else (INF, -1)

    prepare = staticmethod(larc03_prepare)
    point = staticmethod(larc03_point)
