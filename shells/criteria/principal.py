"""Exact strength ratios on the in-plane principal stresses (rotation invariants of σ1, σ2, τ12).

Used by the criteria that must not depend on the layer's axes: isotropic layers
(maximum principal stress and maximum shear stress) and sandwich faces
(wrinkling and dimpling on the most compressive principal stress). Each bound is
the first R at which a 2×2 matrix stops being positive definite, i.e. the first
root of a quadratic in R, so no root search is needed.
"""

from __future__ import annotations

from numba import njit

from .roots import first_crossing
from .state import INF, S1, S2, T12


@njit(cache=True, inline="always")
def principal_ratio(sm, sf, allow, sign):
    """Exact R at which an in-plane principal stress of ``sf + R·sm`` reaches ``sign·allow``.

    ``sign = 1``: the largest principal stress reaches ``allow`` (tension);
    ``sign = −1``: the smallest reaches ``−allow`` (compression). Failure is
    the first R at which ``allow·I − sign·σ`` stops being positive definite: the
    first root of ``det(allow·I − sign·σ(R)) = 0`` (the eigenvalue nearer the
    bound reaches it first). 0 when the fixed part alone is outside; inf when
    ``allow`` is NaN or not positive, or the bound is never reached.
    """
    if not allow > 0.0:
        return INF
    g1, g2, g6 = allow - sign * sf[S1], allow - sign * sf[S2], -sign * sf[T12]
    m1, m2, m6 = -sign * sm[S1], -sign * sm[S2], -sign * sm[T12]
    if g1 <= 0.0 or g2 <= 0.0 or g1 * g2 - g6 * g6 <= 0.0:
        return 0.0
    # g(R) = −det(allow·I − sign·σ(R)): negative while safe.
    return first_crossing(-(m1 * m2 - m6 * m6), -(g1 * m2 + g2 * m1 - 2.0 * g6 * m6), -(g1 * g2 - g6 * g6),
                          0.0, INF)


@njit(cache=True, inline="always")
def in_plane_shear_ratio(sm, sf, allow):
    """Exact R at which the in-plane maximum shear ``sqrt(((σ1 − σ2)/2)² + τ12²)`` reaches ``allow``."""
    dg, dm = 0.5 * (sf[S1] - sf[S2]), 0.5 * (sm[S1] - sm[S2])
    g6, m6 = sf[T12], sm[T12]
    return first_crossing(dm * dm + m6 * m6, 2.0 * (dg * dm + g6 * m6), dg * dg + g6 * g6 - allow * allow, 0.0, INF)


@njit(cache=True, inline="always")
def max_shear_ratio(sm, sf, allow):
    """Exact R at which the largest shear stress of the plane-stress state (σ3 = 0) reaches ``allow``.

    The largest shear stress is max(|σI − σII|, |σI|, |σII|)/2 over the principal stresses σI, σII and
    σ3 = 0 (Tresca): the first of the in-plane shear reaching ``allow`` and a principal stress
    reaching ±2·allow.
    """
    r = in_plane_shear_ratio(sm, sf, allow)
    return min(r, principal_ratio(sm, sf, 2.0 * allow, 1.0), principal_ratio(sm, sf, 2.0 * allow, -1.0))


@njit(cache=True, inline="always")
def compressive_principal_ratio(sm, sf, allow):
    """Exact R at which the most compressive in-plane principal stress reaches ``-allow``; (R, 0) or (inf, -1)."""
    r = principal_ratio(sm, sf, allow, -1.0)
    return (INF, -1) if r == INF else (r, 0)
