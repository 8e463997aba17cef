"""Sandwich face checks on the face's mean stress (face resultant / face thickness) against the face allowable.

Independent derivation in the test: under in-plane resultants only, a symmetric sandwich strains uniformly,
ε = A⁻¹N; every face ply carries Q̄_k ε, and the face's mean stress is Σ Q̄_k t_k ε / t_f. The wrinkling
allowable is k·(E_f·E_c·G_c)^(1/3) (Hoff & Mautner 1945 design coefficient k = 0.5; common practice) with E_f
the face's smallest in-plane modulus over all directions, found here by sampling directions every 0.005°.
Material: Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 (from memory); core values
illustrative.
"""

from __future__ import annotations

import numpy as np

from postproc.recover import recover_cells
from shells.criteria import by_name
from shells.laminate import Laminate, Ply
from shells.materials import Core, Orthotropic
from shells.recovery_tables import build_tables
from shells.section import build_section

PLY = Orthotropic("kaw", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246,
                  S12=68).validate()
CORE = Core("hc", G13=40.0, G23=25.0, Ez=140.0, S13=1.2, S23=0.7, Zc=2.4, cell_size=3.2).validate()
T = 0.25


def _qbar(theta):
    c, s = np.cos(np.radians(theta)), np.sin(np.radians(theta))
    Tm = np.array([[c * c, s * s, -2 * c * s], [s * s, c * c, 2 * c * s], [c * s, -c * s, c * c - s * s]])
    return Tm @ PLY.Q() @ Tm.T


def test_wrinkling_uses_the_face_mean_stress_and_the_face_allowable():
    face = (0.0, 90.0, 45.0)
    lam = Laminate("sw", tuple(Ply(PLY, a, T) for a in face) + (Ply(CORE, 0.0, 10.0),)
                   + tuple(Ply(PLY, a, T) for a in face[::-1]))
    N = np.array([-300.0, -120.0, 40.0])
    A = sum(2 * T * _qbar(a) for a in face)                   # the core carries no in-plane load
    eps = np.linalg.solve(A, N)
    mean = sum(T * _qbar(a) @ eps for a in face) / (3 * T)     # = N / (2·3T): both faces alike
    np.testing.assert_allclose(mean, N / (6 * T), rtol=1e-12)
    smin = 0.5 * (mean[0] + mean[1]) - np.hypot(0.5 * (mean[0] - mean[1]), mean[2])
    a_face = np.linalg.inv(sum(T * _qbar(a) for a in face))
    th = np.radians(np.arange(0.0, 180.0, 0.005))
    v = np.stack([np.cos(th) ** 2, np.sin(th) ** 2, np.cos(th) * np.sin(th)])
    e_min = 1.0 / (3 * T * np.einsum("in,ij,jn->n", v, a_face, v).max())
    allow = 0.5 * (e_min * 140.0 * 25.0) ** (1.0 / 3.0)
    tables = build_tables([build_section(lam)])
    env, _, _ = recover_cells((by_name("wrinkling"),), tables, np.zeros(1, np.int64), np.zeros(1),
                              np.concatenate([N, np.zeros(5)])[None, None], np.zeros((1, 1)), np.zeros(1),
                              np.zeros(1), np.ones(1))
    face_plies = [0, 1, 2, 4, 5, 6]
    np.testing.assert_allclose(env["strength_ratio"][0, face_plies], allow / -smin, rtol=1e-7)
    assert np.all(env["point"][0, face_plies] == 1) and env["mode"][0, 0] == 0
    assert np.isnan(env["strength_ratio"][0, 3]) or env["strength_ratio"][0, 3] == np.inf   # the core
    # The 0° ply alone carries far more than the mean: a per-ply check would have said R ≈ allow/|σ_min(ply)|.
    ply0 = _qbar(0.0) @ eps
    assert -smin < -(0.5 * (ply0[0] + ply0[1]) - np.hypot(0.5 * (ply0[0] - ply0[1]), ply0[2]))


def test_face_allowable_does_not_depend_on_the_laminate_axes():
    for turn in (0.0, 20.0, 65.0):
        sec = build_section(Laminate("sw", (Ply(PLY, turn, T), Ply(PLY, turn + 60, T), Ply(CORE, 0.0, 10.0),
                                            Ply(PLY, turn + 60, T), Ply(PLY, turn, T))))
        if turn == 0.0:
            ref = sec.face_params.copy()
        np.testing.assert_allclose(sec.face_params, ref, rtol=1e-10)
