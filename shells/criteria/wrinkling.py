"""Sandwich face wrinkling: the face's most compressive principal stress against its wrinkling allowable.

Statement (common practice; allowable from :func:`shells.sandwich.wrinkling_stress`,
after Hoff & Mautner 1945 and Allen 1969): failure when the most compressive
in-plane principal stress ``σ_min = (σ1+σ2)/2 − sqrt(((σ1−σ2)/2)² + τ12²)``
reaches ``−σ_wr``, σ_wr = p[WRINKLING], set per ply by the section builder
(NaN for plies not next to a core: not applicable, sr = inf). Solved exactly:
σ_min = −σ_wr is the first root of the quadratic ``det(σ + σ_wr·I) = 0``
(see :func:`compressive_principal_ratio`), so no root
search is needed.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import first_crossing
from .state import INF, S1, S2, T12


@njit(cache=True)
def compressive_principal_ratio(sm, sf, allow):
    """Exact R at which the most compressive in-plane principal stress reaches ``-allow``.

    λ_min(σ) = −W is the first R at which ``σ + W·I`` (in-plane 2×2 tensor)
    stops being positive definite: the smallest positive root of the quadratic
    ``(σ1 + W)(σ2 + W) − τ12² = 0`` (λ_max ≥ λ_min, so λ_min reaches zero
    first). Returns (R, 0) or (inf, -1); NaN or non-positive ``allow`` → inf.
    """
    if not allow > 0.0:
        return INF, -1
    g1, g2, g6 = sf[S1] + allow, sf[S2] + allow, sf[T12]
    m1, m2, m6 = sm[S1], sm[S2], sm[T12]
    if g1 <= 0.0 or g2 <= 0.0 or g1 * g2 - g6 * g6 <= 0.0:
        return 0.0, 0
    # g(R) = −det(σ(R) + W·I): negative while safe.
    a = -(m1 * m2 - m6 * m6)
    b = -(g1 * m2 + g2 * m1 - 2.0 * g6 * m6)
    c = -(g1 * g2 - g6 * g6)
    r = first_crossing(a, b, c, 0.0, INF)
    return (INF, -1) if r == INF else (r, 0)


class Wrinkling(Criterion):
    name = "wrinkling"
    title = "Face wrinkling"
    modes = ("face wrinkling",)
    requires = {P.KIND_PLY: (), P.KIND_ISOTROPIC: ()}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] == P.KIND_CORE:
            return INF, -1
        return compressive_principal_ratio(sm, sf, p[P.WRINKLING])
