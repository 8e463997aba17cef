"""Sandwich face wrinkling: the face's most compressive principal stress against its wrinkling allowable.

Statement (common practice; allowable from :func:`shells.sandwich.wrinkling_stress`,
after Hoff & Mautner 1945 and Allen 1969): failure when the most compressive
in-plane principal stress ``σ_min = (σ1+σ2)/2 − sqrt(((σ1−σ2)/2)² + τ12²)``
reaches ``−σ_wr``, σ_wr = p[WRINKLING], set per ply by the section builder
(NaN for plies not next to a core: not applicable, sr = inf). Solved exactly:
σ_min = −σ_wr is the first root of the quadratic ``det(σ + σ_wr·I) = 0``
(see :func:`shells.criteria.base.compressive_principal_ratio`), so no root
search is needed.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import INF, Criterion, compressive_principal_ratio


class Wrinkling(Criterion):
    name = "wrinkling"
    title = "Face wrinkling"
    modes = ("face wrinkling",)
    requires = {P.KIND_PLY: (), P.KIND_ISOTROPIC: ()}
    points = (0, 1, 2)

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        """Strength ratio and mode (index in ``modes``) of ``sf + R·sm``; see the module docstring."""
        if p[P.KIND] == P.KIND_CORE:
            return INF, -1
        return compressive_principal_ratio(sm, sf, p[P.WRINKLING])
