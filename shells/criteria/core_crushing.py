"""Sandwich core crushing: flatwise compression against the core's compressive strength, and flatwise tension.

Statement (common practice): failure when ``−σ3 = Zc`` (Zc = p[ZC], positive
magnitude) or, when the core gives a flatwise tensile strength Zt, ``σ3 = Zt``
(a suction, a negative pressure). σ3 is non-zero only where a load case states a
pressure. Linear in the load factor: solved exactly.
"""

from __future__ import annotations

import math

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import linear_ratio
from .state import INF, S3


class CoreCrushing(Criterion):
    name = "core-crushing"
    title = "Core flatwise crushing"
    modes = ("flatwise compression", "flatwise tension")
    requires = {P.KIND_CORE: ("Zc",)}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_CORE:
            return INF, -1
        zt = INF if math.isnan(p[P.ZT]) else p[P.ZT]
        r = linear_ratio(sf[S3], sm[S3], zt, p[P.ZC])
        if r == INF:
            return INF, -1
        return r, (1 if sf[S3] + r * sm[S3] > 0.0 else 0)
