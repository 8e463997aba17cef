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

import numpy as np
from numba import njit

from .. import params as P
from .base import Criterion
from .prepared import FAST, SKIP
from .roots import has_fixed
from .search import searched_ratio
from .state import INF, S1, S2, T12

#: Constants of a ply (:func:`puck_constants`): Xt, Xc, S21, Yt, Yc, p⊥∥⁺, p⊥∥⁻, R⊥⊥A, τ21c,
#: 1 − p⊥∥⁺·Yt/S21 and 2(1 + p⊥⊥⁻)·S21.
NPUCK = 11


@njit(cache=True)
def inter_fibre_constants(p):
    """(R⊥⊥A, p⊥⊥⁻, τ21c) of Puck & Schürmann (2002) from Yc, S12 and p⊥∥⁻."""
    s21, pc = p[P.S12], p[P.P_CPL]
    raa = s21 / (2.0 * pc) * (math.sqrt(1.0 + 2.0 * pc * p[P.YC] / s21) - 1.0)
    ptt = pc * raa / s21
    return raa, ptt, s21 * math.sqrt(1.0 + 2.0 * ptt)


@njit(cache=True)
def puck_constants(p, out):
    """The ply's constants (see :data:`NPUCK`) into ``out``, computed once."""
    s21, yt, pt = p[P.S12], p[P.YT], p[P.P_TPL]
    raa, ptt, tc = inter_fibre_constants(p)
    out[0], out[1], out[2], out[3], out[4], out[5], out[6] = p[P.XT], p[P.XC], s21, yt, p[P.YC], pt, p[P.P_CPL]
    out[7], out[8], out[9], out[10] = raa, tc, 1.0 - pt * yt / s21, 2.0 * (1.0 + ptt) * s21


@njit(cache=True)
def exposure(s1, s2, t, c):
    """Puck stress exposure and mode index at (σ1, σ2, |τ21| = ``t``), ply constants ``c``."""
    if s1 >= 0.0:
        ff, fm = s1 / c[0], 0
    else:
        ff, fm = -s1 / c[1], 1
    s21, yt, yc, pt, pc = c[2], c[3], c[4], c[5], c[6]
    if s2 >= 0.0:
        iff = math.sqrt((t / s21) ** 2 + (c[9] * s2 / yt) ** 2) + pt * s2 / s21
        im = 2
    elif -s2 * c[8] <= c[7] * t:
        iff = (math.sqrt(t * t + (pc * s2) ** 2) + pc * s2) / s21
        im = 3
    else:
        iff = ((t / c[10]) ** 2 + (s2 / yc) ** 2) * yc / (-s2)
        im = 4
    if ff >= iff:
        return ff, fm
    return iff, im


@njit(cache=True)
def puck_ratio(m1, m2, m6, g1, g2, g6, homogeneous, c):
    """Strength ratio and mode along ``g + R·m`` (σ1, σ2, τ21); ``homogeneous``: no fixed part at all (R in
    closed form), else searched."""
    return searched_ratio(exposure, m1, m2, m6, g1, g2, g6, homogeneous, c)


@njit(cache=True)
def puck_prepare(p, out):
    """The prepared form of a ply (:mod:`shells.criteria.prepared`): its constants, or SKIP off plies."""
    if p[P.KIND] != P.KIND_PLY:
        return SKIP
    puck_constants(p, out)
    return FAST


@njit(cache=True)
def puck_point(sm, sf, c, m):
    """(R, mode) at a point with the ply's constants in row ``m`` of ``c``: closed form without a fixed part."""
    return puck_ratio(sm[S1], sm[S2], sm[T12], sf[S1], sf[S2], sf[T12], not has_fixed(sf), c[m])


class Puck(Criterion):
    name = "puck"
    title = "Puck (plane stress, modes A, B, C)"
    modes = ("fibre tension", "fibre compression", "inter-fibre mode A", "inter-fibre mode B",
             "inter-fibre mode C")
    requires = {P.KIND_PLY: ("Xt", "Xc", "Yt", "Yc", "S12", "p_tpl", "p_cpl")}

    @staticmethod
    @njit(cache=True)
    def ratio(sm, sf, p):
        c = np.empty((1, NPUCK))
        return puck_point(sm, sf, c, 0) if puck_prepare(p, c[0]) == FAST else (INF, -1)

    prepare = staticmethod(puck_prepare)
    point = staticmethod(puck_point)
