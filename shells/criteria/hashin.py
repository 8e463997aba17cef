"""Hashin (1980) criterion with its four modes.

Statement (Hashin, J. Applied Mechanics 47 (1980) 329–334), 3-D form, which
for σ3 = 0 (plane-stress CLT) reduces to the familiar plane form:

- fibre tension, σ1 > 0: ``(σ1/Xt)² + (τ12² + τ13²)/S12² = 1``;
- fibre compression, σ1 < 0: ``−σ1 = Xc``;
- matrix tension, σ2 + σ3 ≥ 0: ``(σ2+σ3)²/Yt² + (τ23² − σ2σ3)/S23²
  + (τ12² + τ13²)/S12² = 1``;
- matrix compression, σ2 + σ3 < 0: ``[(Yc/2S23)² − 1](σ2+σ3)/Yc
  + (σ2+σ3)²/(4·S23²) + (τ23² − σ2σ3)/S23² + (τ12² + τ13²)/S12² = 1``.

S12 serves τ13 too (transverse isotropy). The transverse shear strength S_T is
the material's S23 when given, else the fracture-plane value of Dávila,
Camanho & Rose (J. Composite Materials 39 (2005) 323–345):
``S_T = Yc·cos α0·(sin α0 + cos α0/tan 2α0)`` with the fracture angle of pure
transverse compression α0 (53° by default), about 0.377·Yc, set once per
material in p[S_T] (:meth:`shells.materials.Orthotropic.transverse_shear_strength`). Each mode is quadratic in
the load factor on the part of the ray where its sign condition holds, so R is
exact: the ray is cut where σ1 (resp. σ2 + σ3) changes sign. With σ1 ≡ 0 no
fibre mode applies (pure shear is matrix governed).
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .prepared import FAST, SKIP
from .roots import break_point, first_crossing, sign_between
from .state import INF, PLY_MODES, S1, S2, S3, T12, T13, T23


@njit(cache=True)
def hashin_constants(p):
    """(Xc, 1/Xt², 1/S12², 1/S_T², 1/Yt², ((Yc/2S_T)² − 1)/Yc, 1/(4 S_T²)) of a ply."""
    xt, yt, yc, s12, s23 = p[P.XT], p[P.YT], p[P.YC], p[P.S12], p[P.S_T]
    return (p[P.XC], 1.0 / (xt * xt), 1.0 / (s12 * s12), 1.0 / (s23 * s23), 1.0 / (yt * yt),
            ((0.5 * yc / s23) ** 2 - 1.0) / yc, 0.25 / (s23 * s23))


@njit(cache=True, error_model="numpy")
def _piece(fibre, g, m, lo, hi, an, bn, cn, ap, bp, cp):
    """First failure R of a mode pair on the piece [lo, hi] of the ray where ``g + R·m`` keeps its sign.

    Coefficients (an, bn, cn) where that sign is negative (compression), (ap, bp, cp) else; (R, mode).
    Fibre: no mode where σ1 ≡ 0 on the piece; matrix: σ2 + σ3 = 0 counts as tension.
    """
    sign = sign_between(g, m, lo, hi)
    neg = sign < 0
    r = first_crossing(an if neg else ap, bn if neg else bp, cn if neg else cp, lo, hi)
    mode = (1 if neg else 0) if fibre else (3 if neg else 2)
    none = (not hi > lo) or (fibre and sign == 0)
    return (INF if none else r), (-1 if none else mode)


@njit(cache=True, error_model="numpy")
def hashin_ratio(m1, m2, m6, m13, m23, m3, g1, g2, g6, g13, g23, g3, xc, k_xt, k_s12, k_st, k_yt, lin, k_c):
    """Exact R and mode of Hashin's four modes for the stresses ``g + R·m`` (constants: :func:`hashin_constants`).

    The ray is cut where σ1 (fibre) and σ2 + σ3 (matrix) change sign; each piece is solved exactly.
    """
    # Fibre: compression −σ1 = Xc (linear); tension (σ1/Xt)² + (τ12² + τ13²)/S12² = 1.
    ap = k_xt * m1 * m1 + k_s12 * (m6 * m6 + m13 * m13)
    bp = 2.0 * (k_xt * g1 * m1 + k_s12 * (g6 * m6 + g13 * m13))
    cp = k_xt * g1 * g1 + k_s12 * (g6 * g6 + g13 * g13) - 1.0
    an, bn, cn = 0.0, -m1 / xc, -g1 / xc - 1.0
    bf = break_point(g1, m1)
    r0, d0 = _piece(True, g1, m1, 0.0, bf, an, bn, cn, ap, bp, cp)
    r1, d1 = _piece(True, g1, m1, bf, INF, an, bn, cn, ap, bp, cp)
    rf, df = (r1 if r0 == INF else r0), (d1 if r0 == INF else d0)
    # Matrix: (τ12² + τ13²)/S12² + (τ23² − σ2σ3)/S_T² plus the tension or compression terms of σ2 + σ3.
    gs, ms = g2 + g3, m2 + m3
    a = k_s12 * (m6 * m6 + m13 * m13) + k_st * (m23 * m23 - m2 * m3)
    b = k_s12 * ((g6 * m6 + g6 * m6) + (g13 * m13 + g13 * m13)) + k_st * ((g23 * m23 + g23 * m23) - (g2 * m3 + g3 * m2))
    c = k_s12 * (g6 * g6 + g13 * g13) + k_st * (g23 * g23 - g2 * g3) - 1.0
    at, bt, ct = a + k_yt * ms * ms, b + 2.0 * k_yt * gs * ms, c + k_yt * gs * gs
    ac, bc, cc = a + k_c * ms * ms, b + 2.0 * k_c * gs * ms + lin * ms, c + k_c * gs * gs + lin * gs
    bm = break_point(gs, ms)
    r0, d0 = _piece(False, gs, ms, 0.0, bm, ac, bc, cc, at, bt, ct)
    r1, d1 = _piece(False, gs, ms, bm, INF, ac, bc, cc, at, bt, ct)
    rm, dm = (r1 if r0 == INF else r0), (d1 if r0 == INF else d0)
    r = rm if rm < rf else (INF if rf == INF else rf)
    return r, (dm if rm < rf else (-1 if rf == INF else df))


class Hashin(Criterion):
    name = "hashin"
    title = "Hashin (1980)"
    modes = PLY_MODES[:4]
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        xc, k_xt, k_s12, k_st, k_yt, lin, k_c = hashin_constants(p)
        return hashin_ratio(sm[S1], sm[S2], sm[T12], sm[T13], sm[T23], sm[S3], sf[S1], sf[S2], sf[T12], sf[T13],
                            sf[T23], sf[S3], xc, k_xt, k_s12, k_st, k_yt, lin, k_c)

    @staticmethod
    @njit(cache=True)
    def prepare(p, out):
        if p[P.KIND] != P.KIND_PLY:
            return SKIP
        out[0], out[1], out[2], out[3], out[4], out[5], out[6] = hashin_constants(p)
        return FAST

    @staticmethod
    @njit(cache=True)
    def point(sm, sf, c, m):
        return hashin_ratio(sm[S1], sm[S2], sm[T12], sm[T13], sm[T23], sm[S3], sf[S1], sf[S2], sf[T12], sf[T13],
                            sf[T23], sf[S3], c[m, 0], c[m, 1], c[m, 2], c[m, 3], c[m, 4], c[m, 5], c[m, 6])
