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
from .roots import break_point, first_crossing, product_coeffs, sign_between
from .state import INF, PLY_MODES, S1, S2, S3, T12, T13, T23


@njit(cache=True, inline="always")
def _shear_terms(sm, sf, s12, s23):
    """Coefficients of (τ12² + τ13²)/S12² + (τ23² − σ2σ3)/S23²."""
    a12, b12, c12 = product_coeffs(sf[T12], sm[T12], sf[T12], sm[T12])
    a13, b13, c13 = product_coeffs(sf[T13], sm[T13], sf[T13], sm[T13])
    a23, b23, c23 = product_coeffs(sf[T23], sm[T23], sf[T23], sm[T23])
    ax, bx, cx = product_coeffs(sf[S2], sm[S2], sf[S3], sm[S3])
    k, q = 1.0 / (s12 * s12), 1.0 / (s23 * s23)
    return (k * (a12 + a13) + q * (a23 - ax), k * (b12 + b13) + q * (b23 - bx),
            k * (c12 + c13) + q * (c23 - cx))


@njit(cache=True, inline="always")
def _fibre(sm, sf, p, lo, hi):
    """First failure R of the fibre modes on a piece of constant sign of σ1; (R, mode)."""
    if not hi > lo:
        return INF, -1
    sign = sign_between(sf[S1], sm[S1], lo, hi)
    if sign == 0:
        return INF, -1
    g1, m1 = sf[S1], sm[S1]
    if sign < 0:
        xc = p[P.XC]
        return first_crossing(0.0, -m1 / xc, -g1 / xc - 1.0, lo, hi), 1
    xt, s12 = p[P.XT], p[P.S12]
    k, q = 1.0 / (xt * xt), 1.0 / (s12 * s12)
    a = k * m1 * m1 + q * (sm[T12] * sm[T12] + sm[T13] * sm[T13])
    b = 2.0 * (k * g1 * m1 + q * (sf[T12] * sm[T12] + sf[T13] * sm[T13]))
    c = k * g1 * g1 + q * (sf[T12] * sf[T12] + sf[T13] * sf[T13]) - 1.0
    return first_crossing(a, b, c, lo, hi), 0


@njit(cache=True, inline="always")
def _matrix(sm, sf, p, lo, hi, s23):
    """First failure R of the matrix modes on a piece of constant sign of σ2 + σ3; (R, mode)."""
    if not hi > lo:
        return INF, -1
    gs, ms = sf[S2] + sf[S3], sm[S2] + sm[S3]
    a, b, c = _shear_terms(sm, sf, p[P.S12], s23)
    c -= 1.0
    if sign_between(gs, ms, lo, hi) >= 0:
        yt = p[P.YT]
        k = 1.0 / (yt * yt)
        return first_crossing(a + k * ms * ms, b + 2.0 * k * gs * ms, c + k * gs * gs, lo, hi), 2
    yc = p[P.YC]
    lin = ((0.5 * yc / s23) ** 2 - 1.0) / yc
    k = 0.25 / (s23 * s23)
    return first_crossing(a + k * ms * ms, b + 2.0 * k * gs * ms + lin * ms,
                          c + k * gs * gs + lin * gs, lo, hi), 3


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
        s23 = p[P.S_T]
        bf = break_point(sf[S1], sm[S1])
        r, m = _fibre(sm, sf, p, 0.0, bf)
        if r == INF:
            r, m = _fibre(sm, sf, p, bf, INF)
        bm = break_point(sf[S2] + sf[S3], sm[S2] + sm[S3])
        rm, mm = _matrix(sm, sf, p, 0.0, bm, s23)
        if rm == INF:
            rm, mm = _matrix(sm, sf, p, bm, INF, s23)
        if rm < r:
            return rm, mm
        if r == INF:
            return INF, -1
        return r, m
