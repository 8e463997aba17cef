"""Sandwich core crushing: flatwise compression against the core's compressive strength.

Statement (common practice): failure when ``−σ3 = Zc`` (Zc = p[ZC], positive
magnitude). σ3 is non-zero only where a load case states a pressure. Linear in
the load factor: solved exactly; through-thickness tension never fails here.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import linear_ratio
from .state import INF, S3


class CoreCrushing(Criterion):
    name = "core-crushing"
    title = "Core flatwise crushing"
    modes = ("flatwise compression",)
    requires = {P.KIND_CORE: ("Zc",)}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_CORE:
            return INF, -1
        r = linear_ratio(sf[S3], sm[S3], INF, p[P.ZC])
        return (INF, -1) if r == INF else (r, 0)
