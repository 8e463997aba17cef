"""Sandwich face wrinkling: the face's most compressive principal stress against its wrinkling allowable.

Statement (common practice; allowable from :func:`shells.sandwich.wrinkling_stress`,
after Hoff & Mautner 1945 and Allen 1969): a face-level check. The face's mean
stress (the face's in-plane resultant over its thickness, laminate axes) fails
when its most compressive principal stress
``σ_min = (σx+σy)/2 − sqrt(((σx−σy)/2)² + τxy²)`` reaches ``−σ_wr``,
σ_wr = p[WRINKLING] of the face (``Section.face_params``; NaN where the core
has no Ez: not applicable, sr = inf). Solved exactly:
σ_min = −σ_wr is the first root of the quadratic ``det(σ + σ_wr·I) = 0``
(:func:`shells.criteria.principal.compressive_principal_ratio`), so no root
search is needed.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .principal import compressive_principal_ratio
from .state import INF


class Wrinkling(Criterion):
    name = "wrinkling"
    title = "Face wrinkling"
    modes = ("face wrinkling",)
    requires = {P.KIND_PLY: (), P.KIND_ISOTROPIC: ()}
    level = "face"

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] == P.KIND_CORE:
            return INF, -1
        return compressive_principal_ratio(sm, sf, p[P.WRINKLING])
