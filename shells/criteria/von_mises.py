"""Von Mises (distortion energy) criterion for isotropic layers.

Statement (common practice; von Mises 1913): ``σ_vm = Y`` with
``σ_vm² = σ1² + σ2² + σ3² − σ1σ2 − σ2σ3 − σ3σ1 + 3(τ12² + τ13² + τ23²)``,
Y = p[YIELD]. The transverse shear and σ3 terms are included. Quadratic in
the load factor: solved exactly.
"""

from __future__ import annotations

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import first_crossing, product_coeffs
from .state import INF, S1, S2, S3, T12, T13, T23


@njit(cache=True)
def _vm_square_coeffs(sm, sf):
    """Coefficients (R², R, 1) of σ_vm² along the ray ``sf + R·sm``."""
    a = b = c = 0.0
    # (i, j, weight) of the terms of σ_vm².
    for i, j, w in ((S1, S1, 1.0), (S2, S2, 1.0), (S3, S3, 1.0), (S1, S2, -1.0), (S2, S3, -1.0),
                    (S3, S1, -1.0), (T12, T12, 3.0), (T13, T13, 3.0), (T23, T23, 3.0)):
        ta, tb, tc = product_coeffs(sf[i], sm[i], sf[j], sm[j])
        a += w * ta
        b += w * tb
        c += w * tc
    return a, b, c


class VonMises(Criterion):
    name = "von-mises"
    title = "Von Mises equivalent stress"
    modes = ("equivalent stress",)
    requires = {P.KIND_ISOTROPIC: ("yield_strength",)}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_ISOTROPIC:
            return INF, -1
        a, b, c = _vm_square_coeffs(sm, sf)
        k = 1.0 / (p[P.YIELD] * p[P.YIELD])
        r = first_crossing(k * a, k * b, k * c - 1.0, 0.0, INF)
        return (INF, -1) if r == INF else (r, 0)
