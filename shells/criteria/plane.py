"""The in-plane quadratic polynomial shared by Tsai-Wu, Hoffman and Tsai-Hill.

``F1σ1 + F2σ2 + F11σ1² + F22σ2² + F66τ12² + 2F12σ1σ2`` along the load ray
``sf + R·sm``, solved exactly for the first R at which it reaches 1, and the
dominant term at failure (the mode). Written on the components (mechanical
m1, m2, m6 and fixed g1, g2, g6 of σ1, σ2, τ12).
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .prepared import INSIDE
from .roots import first_crossing
from .state import FC, FT, INF, MC, MT, S1, S2, SH, T12


@njit(cache=True, forceinline=True)
def plane_quadratic(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12):
    """Coefficients (a, b, c) of the in-plane polynomial criterion minus 1 along the ray.

    Criterion ``F1σ1 + F2σ2 + F11σ1² + F22σ2² + F66τ12² + 2F12σ1σ2`` at
    ``g + R·m`` written as ``a R² + b R + c + 1``.
    """
    a = f11 * m1 * m1 + f22 * m2 * m2 + f66 * m6 * m6 + 2.0 * f12 * m1 * m2
    b = (f1 * m1 + f2 * m2 + 2.0 * (f11 * g1 * m1 + f22 * g2 * m2 + f66 * g6 * m6)
         + 2.0 * f12 * (g1 * m2 + g2 * m1))
    c = f1 * g1 + f2 * g2 + f11 * g1 * g1 + f22 * g2 * g2 + f66 * g6 * g6 + 2.0 * f12 * g1 * g2 - 1.0
    return a, b, c


@njit(cache=True, forceinline=True)
def dominant_mode(m1, m2, m6, g1, g2, g6, r, f1, f2, f11, f22, f66):
    """Index in ``PLY_MODES`` of the largest term of an in-plane polynomial at ``g + r·m``.

    Terms: fibre ``F1σ1 + F11σ1²``, matrix ``F2σ2 + F22σ2²``, shear ``F66τ12²``;
    the interaction term is left out. -1 when ``r`` is inf.
    """
    if r == INF:
        return -1
    s1, s2, s6 = g1 + r * m1, g2 + r * m2, g6 + r * m6
    fib = f1 * s1 + f11 * s1 * s1
    mat = f2 * s2 + f22 * s2 * s2
    she = f66 * s6 * s6
    if she >= fib and she >= mat:
        return SH
    if fib >= mat:
        return FT if s1 >= 0.0 else FC
    return MT if s2 >= 0.0 else MC


@njit(cache=True)
def plane_strengths(p):
    """Coefficients (F1, F2, F11, F22, F66) of the in-plane polynomial from the ply's strengths."""
    xt, xc, yt, yc, s = p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12]
    return 1.0 / xt - 1.0 / xc, 1.0 / yt - 1.0 / yc, 1.0 / (xt * xc), 1.0 / (yt * yc), 1.0 / (s * s)


@njit(cache=True, forceinline=True)
def plane_ratio(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12, lo, hi):
    """Exact first R in [lo, hi] at which the in-plane polynomial reaches 1, and the mode; (inf, -1) if none."""
    a, b, c = plane_quadratic(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12)
    r = first_crossing(a, b, c, lo, hi)
    return r, dominant_mode(m1, m2, m6, g1, g2, g6, r, f1, f2, f11, f22, f66)


@njit(cache=True, forceinline=True)
def plane_value(s1, s2, s6, f1, f2, f11, f22, f66, f12):
    """The in-plane polynomial ``F1σ1 + F2σ2 + F11σ1² + F22σ2² + F66τ12² + 2F12σ1σ2``."""
    return f1 * s1 + f2 * s2 + f11 * s1 * s1 + f22 * s2 * s2 + f66 * s6 * s6 + 2.0 * f12 * s1 * s2


@njit(cache=True, forceinline=True)
def plane_inside(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12, lam):
    """Whether the polynomial stays below 1 for ``g + R·m``, 0 ≤ R ≤ ``lam``: it is convex (F11, F22, F66 ≥ 0,
    F12² ≤ F11·F22) and both ends lie below 1 − INSIDE. False when it cannot tell."""
    if not (lam < INF and f11 >= 0.0 and f22 >= 0.0 and f66 >= 0.0 and f12 * f12 <= f11 * f22):
        return False
    top = 1.0 - INSIDE
    return (plane_value(g1, g2, g6, f1, f2, f11, f22, f66, f12) < top
            and plane_value(g1 + lam * m1, g2 + lam * m2, g6 + lam * m6, f1, f2, f11, f22, f66, f12) < top)


@njit(cache=True, inline="always")
def polynomial_ratio(sm, sf, f1, f2, f11, f22, f66, f12, lo, hi):
    """:func:`plane_ratio` on point states ``sm``, ``sf`` (see :mod:`shells.criteria.state`)."""
    return plane_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], f1, f2, f11, f22, f66, f12, lo, hi)
