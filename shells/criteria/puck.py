"""Puck's action-plane criterion, plane-stress form: fibre failure and inter-fibre modes A, B, C.

Statement (Puck & Schürmann, Composites Sci. Tech. 58 (1998) 1045–1067 and
62 (2002) 1633–1662), written as stress exposures f_E (failure at f_E = 1),
with S21 = S12, p⊥∥⁺ = p[P_TPL], p⊥∥⁻ = p[P_CPL]:

- fibre: ``f_E = σ1/Xt`` (σ1 ≥ 0) or ``−σ1/Xc`` (σ1 < 0), the simple
  fibre-failure form;
- derived: ``R⊥⊥A = S21/(2p⊥∥⁻)·[sqrt(1 + 2p⊥∥⁻·Yc/S21) − 1]``,
  ``p⊥⊥⁻ = p⊥∥⁻·R⊥⊥A/S21``, ``τ21c = S21·sqrt(1 + 2p⊥⊥⁻)``;
- mode A (σ2 ≥ 0): ``f_E = sqrt[(τ21/S21)² + (1 − p⊥∥⁺·Yt/S21)²(σ2/Yt)²]
  + p⊥∥⁺·σ2/S21``;
- mode B (σ2 < 0, |σ2|/|τ21| ≤ R⊥⊥A/τ21c): ``f_E = [sqrt(τ21² + (p⊥∥⁻σ2)²)
  + p⊥∥⁻σ2]/S21``;
- mode C (σ2 < 0 otherwise): ``f_E = [(τ21/(2(1 + p⊥⊥⁻)S21))² + (σ2/Yc)²]
  ·Yc/(−σ2)``.

Every exposure is homogeneous of degree 1 in stress, so with no fixed part
R = 1/max(f_E) exactly; with a fixed part there is no closed form and R comes
from the bracketed search :func:`shells.criteria.search.search_next`.
"""

from __future__ import annotations

import math

from numba import njit

from .. import params as P
from .base import Criterion
from .roots import at, has_fixed
from .search import search_done, search_next, search_point, search_result, search_start
from .state import INF, S1, S2, T12


@njit(cache=True)
def inter_fibre_constants(p):
    """(R⊥⊥A, p⊥⊥⁻, τ21c) of Puck & Schürmann (2002) from Yc, S12 and p⊥∥⁻."""
    s21, pc = p[P.S12], p[P.P_CPL]
    raa = s21 / (2.0 * pc) * (math.sqrt(1.0 + 2.0 * pc * p[P.YC] / s21) - 1.0)
    ptt = pc * raa / s21
    return raa, ptt, s21 * math.sqrt(1.0 + 2.0 * ptt)


@njit(cache=True)
def _exposure(sm, sf, r, p):
    """Puck stress exposure and mode index at ``sf + r·sm``."""
    s1, s2, t = at(sm, sf, r, S1), at(sm, sf, r, S2), abs(at(sm, sf, r, T12))
    if s1 >= 0.0:
        ff, fm = s1 / p[P.XT], 0
    else:
        ff, fm = -s1 / p[P.XC], 1
    s21, yt, yc, pt, pc = p[P.S12], p[P.YT], p[P.YC], p[P.P_TPL], p[P.P_CPL]
    if s2 >= 0.0:
        k = 1.0 - pt * yt / s21
        iff = math.sqrt((t / s21) ** 2 + (k * s2 / yt) ** 2) + pt * s2 / s21
        im = 2
    else:
        raa, ptt, tc = inter_fibre_constants(p)
        if -s2 * tc <= raa * t:
            iff = (math.sqrt(t * t + (pc * s2) ** 2) + pc * s2) / s21
            im = 3
        else:
            iff = ((t / (2.0 * (1.0 + ptt) * s21)) ** 2 + (s2 / yc) ** 2) * yc / (-s2)
            im = 4
    if ff >= iff:
        return ff, fm
    return iff, im


class Puck(Criterion):
    name = "puck"
    title = "Puck (plane stress, modes A, B, C)"
    modes = ("fibre tension", "fibre compression", "inter-fibre mode A", "inter-fibre mode B",
             "inter-fibre mode C")
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12", "p_tpl", "p_cpl")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        if p[P.KIND] != P.KIND_PLY:
            return INF, -1
        st = search_start(True and not has_fixed(sf))
        f, m = _exposure(sm, sf, 0.0, p)
        while not search_done(st):
            st = search_next(st, f)
            f, m = _exposure(sm, sf, search_point(st), p)
        return search_result(st, m)
