"""Sandwich intracell dimpling: the face's most compressive principal stress against its dimpling allowable.

Statement (common practice; allowable from :func:`shells.sandwich.dimpling_stress`,
σ_dim = 2·Ef/(1 − νf²)·(tf/s)²): a face-level check, as wrinkling. The most
compressive principal stress of the face's mean stress reaches ``−σ_dim``,
σ_dim = p[DIMPLING] of the face (NaN where the core has no cell size: not
applicable, sr = inf). Solved exactly as for wrinkling.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .principal import compressive_principal_ratio
from .state import INF


class Dimpling(Criterion):
    name = "dimpling"
    title = "Intracell dimpling"
    modes = ("intracell dimpling",)
    requires = {P.KIND_PLY: (), P.KIND_ISOTROPIC: ()}
    level = "face"

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] == P.KIND_CORE:
            return INF, -1
        return compressive_principal_ratio(sm, sf, p[P.DIMPLING])
