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
from .prepared import FAST, INSIDE, SKIP
from .roots import break_point, first_crossing, sign_between
from .state import INF, PLY_MODES, S1, S2, S3, T12, T13, T23


@njit(cache=True)
def hashin_constants(p):
    """(Xc, 1/Xt², 1/S12², 1/S_T², 1/Yt², ((Yc/2S_T)² − 1)/Yc, 1/(4 S_T²)) of a ply."""
    xt, yt, yc, s12, s23 = p[P.XT], p[P.YT], p[P.YC], p[P.S12], p[P.S_T]
    return (p[P.XC], 1.0 / (xt * xt), 1.0 / (s12 * s12), 1.0 / (s23 * s23), 1.0 / (yt * yt),
            ((0.5 * yc / s23) ** 2 - 1.0) / yc, 0.25 / (s23 * s23))


@njit(cache=True, forceinline=True)
def _fibre(m1, m6, m13, g1, g6, g13, xc, k_xt, k_s12, lo, hi):
    """First failure R of the fibre modes on a piece of constant sign of σ1; (R, mode)."""
    if not hi > lo:
        return INF, -1
    sign = sign_between(g1, m1, lo, hi)
    if sign == 0:
        return INF, -1
    if sign < 0:   # compression −σ1 = Xc (linear)
        return first_crossing(0.0, -m1 / xc, -g1 / xc - 1.0, lo, hi), 1
    # tension (σ1/Xt)² + (τ12² + τ13²)/S12² = 1
    a = k_xt * m1 * m1 + k_s12 * (m6 * m6 + m13 * m13)
    b = 2.0 * (k_xt * g1 * m1 + k_s12 * (g6 * m6 + g13 * m13))
    c = k_xt * g1 * g1 + k_s12 * (g6 * g6 + g13 * g13) - 1.0
    return first_crossing(a, b, c, lo, hi), 0


@njit(cache=True, forceinline=True)
def _matrix(gs, ms, a, b, c, k_yt, lin, k_c, lo, hi):
    """First failure R of the matrix modes on a piece of constant sign of σ2 + σ3; (R, mode).

    (a, b, c): the shear terms minus 1, to which the tension or compression terms of σ2 + σ3 are added.
    """
    if not hi > lo:
        return INF, -1
    if sign_between(gs, ms, lo, hi) >= 0:
        return first_crossing(a + k_yt * ms * ms, b + 2.0 * k_yt * gs * ms, c + k_yt * gs * gs, lo, hi), 2
    return first_crossing(a + k_c * ms * ms, b + 2.0 * k_c * gs * ms + lin * ms, c + k_c * gs * gs + lin * gs,
                          lo, hi), 3


@njit(cache=True, forceinline=True)
def hashin_ratio(m1, m2, m6, m13, m23, m3, g1, g2, g6, g13, g23, g3, xc, k_xt, k_s12, k_st, k_yt, lin, k_c):
    """Exact R and mode of Hashin's four modes for the stresses ``g + R·m`` (constants: :func:`hashin_constants`).

    The ray is cut where σ1 (fibre) and σ2 + σ3 (matrix) change sign; each piece is solved exactly.
    """
    bf = break_point(g1, m1)
    r, mode = _fibre(m1, m6, m13, g1, g6, g13, xc, k_xt, k_s12, 0.0, bf)
    if r == INF:
        r, mode = _fibre(m1, m6, m13, g1, g6, g13, xc, k_xt, k_s12, bf, INF)
    # Matrix: (τ12² + τ13²)/S12² + (τ23² − σ2σ3)/S_T² plus the tension or compression terms of σ2 + σ3.
    gs, ms = g2 + g3, m2 + m3
    a = k_s12 * (m6 * m6 + m13 * m13) + k_st * (m23 * m23 - m2 * m3)
    b = k_s12 * ((g6 * m6 + g6 * m6) + (g13 * m13 + g13 * m13)) + k_st * ((g23 * m23 + g23 * m23) - (g2 * m3 + g3 * m2))
    c = k_s12 * (g6 * g6 + g13 * g13) + k_st * (g23 * g23 - g2 * g3) - 1.0
    bm = break_point(gs, ms)
    rm, mm = _matrix(gs, ms, a, b, c, k_yt, lin, k_c, 0.0, bm)
    if rm == INF:
        rm, mm = _matrix(gs, ms, a, b, c, k_yt, lin, k_c, bm, INF)
    if rm < r:
        return rm, mm
    if r == INF:
        return INF, -1
    return r, mode


@njit(cache=True, inline="always")
def _mode_below(v0, v1, g, s, ends_sign):
    """A convex mode's value below 1 − INSIDE at both ends of the segment, or its sign condition (σ of sign
    ``ends_sign``) false at both ends (then false all along: σ is affine on the segment)."""
    top = 1.0 - INSIDE
    if ends_sign > 0 and g < 0.0 and s < 0.0 or ends_sign < 0 and g > 0.0 and s > 0.0:
        return True
    return v0 < top and v1 < top


@njit(cache=True, inline="always")
def hashin_inside(m1, m2, m6, m13, m23, m3, g1, g2, g6, g13, g23, g3, xc, k_xt, k_s12, k_st, k_yt, lin, k_c, lam):
    """Whether none of the four modes reaches 1 for ``g + R·m``, 0 ≤ R ≤ ``lam`` (False when it cannot tell).

    With σ3 = 0 at both ends every mode's function is convex in the stresses (sums of squares, plus a linear
    term in σ2 for matrix compression): a mode cannot fail on the segment when it lies below 1 − INSIDE at both
    ends, or when its sign condition (σ1 > 0, σ1 < 0, σ2 ≥ 0, σ2 < 0) is false at both ends. With σ3 ≠ 0 the
    matrix modes' σ2σ3 term is not convex in general: False.
    """
    if not (lam < INF and g3 == 0.0 and m3 == 0.0):
        return False
    e1, e2, e6, e13, e23 = g1 + lam * m1, g2 + lam * m2, g6 + lam * m6, g13 + lam * m13, g23 + lam * m23
    sh0 = k_s12 * (g6 * g6 + g13 * g13)
    sh1 = k_s12 * (e6 * e6 + e13 * e13)
    tr0 = sh0 + k_st * g23 * g23
    tr1 = sh1 + k_st * e23 * e23
    return (_mode_below(k_xt * g1 * g1 + sh0, k_xt * e1 * e1 + sh1, g1, e1, 1)
            and _mode_below(-g1 / xc, -e1 / xc, g1, e1, -1)
            and _mode_below(k_yt * g2 * g2 + tr0, k_yt * e2 * e2 + tr1, g2, e2, 1)
            and _mode_below(k_c * g2 * g2 + lin * g2 + tr0, k_c * e2 * e2 + lin * e2 + tr1, g2, e2, -1))


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
    @njit(cache=True, inline="always")
    def point(sm, sf, c, m):
        return hashin_ratio(sm[S1], sm[S2], sm[T12], sm[T13], sm[T23], sm[S3], sf[S1], sf[S2], sf[T12], sf[T13],
                            sf[T23], sf[S3], c[m, 0], c[m, 1], c[m, 2], c[m, 3], c[m, 4], c[m, 5], c[m, 6])

    @staticmethod
    @njit(cache=True, inline="always")
    def inside(sm, sf, c, m, lam):
        return hashin_inside(sm[S1], sm[S2], sm[T12], sm[T13], sm[T23], sm[S3], sf[S1], sf[S2], sf[T12], sf[T13],
                             sf[T23], sf[S3], c[m, 0], c[m, 1], c[m, 2], c[m, 3], c[m, 4], c[m, 5], c[m, 6], lam)
