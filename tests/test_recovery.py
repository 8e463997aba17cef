"""Ply recovery: the numba kernel against a plain-numpy reference, hand recoveries and published values."""

from __future__ import annotations

import numpy as np
import pytest

from postproc.recover import Envelope, recover_cells, recover_into
from shells.criteria import CRITERIA, by_name, code
from shells.criteria.dispatch import ratio_by_code
from shells.criteria.prepared import FAST, NCONST, SKIP
from shells.laminate import Laminate, Ply
from shells.materials import Core, Isotropic, Orthotropic
from shells.ply_defaults import StrainLimits
from shells.recovery_reference import ply_states
from shells.recovery_tables import build_tables
from shells.section import build_section

# Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 graphite/epoxy, MPa; strain allowables are
# the strengths over the moduli (common practice for a linear lamina), thermal data of the same table.
KAW = Orthotropic("kaw", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, G23=3.5e3, Xt=1500, Xc=1500, Yt=40,
                  Yc=246, S12=68, S13=68, S23=40,
                  strain_limits=StrainLimits(1500 / 181e3, 1500 / 181e3, 40 / 10.3e3, 246 / 10.3e3, 68 / 7.17e3),
                  alpha1=0.02e-6, alpha2=22.5e-6, ilss=60, knockdown=0.8).validate()
AL = Isotropic("al", E=70e3, nu=0.33, cte=23e-6, yield_strength=300.0, Xt=300, Xc=300, S12=170).validate()
CORE = Core("hc", G13=40.0, G23=25.0, Ez=140.0, S13=1.2, S23=0.7, Zc=2.4, cell_size=3.2).validate()


def sections():
    lams = [
        Laminate("qi", tuple(Ply(KAW, a, 0.125) for a in (0, 45, -45, 90, 90, -45, 45, 0))),
        Laminate("unsym", (Ply(KAW, 30, 0.2), Ply(KAW, -45, 0.3), Ply(AL, 0, 0.4))),
        Laminate("sandwich", (Ply(KAW, 0, 0.25), Ply(KAW, 45, 0.25), Ply(CORE, 0, 8.0), Ply(KAW, 45, 0.25),
                              Ply(KAW, 0, 0.25)), offset=0.5),
    ]
    return [build_section(l) for l in lams]


@pytest.mark.parametrize("criterion", CRITERIA, ids=lambda c: c.name)
def test_dispatch_matches_every_registered_criterion(criterion):
    rng = np.random.default_rng(code(criterion.name))
    for mat in (KAW, AL, CORE):
        p = mat.params()
        for _ in range(20):
            sm, sf = rng.normal(0, 30, 6), rng.normal(0, 5, 6)
            assert ratio_by_code(code(criterion.name), sm, sf, p) == criterion.ratio(sm, sf, p)


@pytest.mark.parametrize("criterion", CRITERIA, ids=lambda c: c.name)
def test_prepared_form_gives_the_bits_of_ratio(criterion):
    # The kernel's fast path (constants prepared once per ply, then point) against the criterion's own ratio,
    # with and without a fixed part (the closed-form and the searched paths of Puck and LaRC03).
    rng = np.random.default_rng(100 + code(criterion.name))
    for mat in (KAW, AL, CORE):
        p = mat.params()
        c = np.zeros((2, NCONST))
        form = criterion.prepare(p, c[1])
        for k in range(20):
            sm, sf = rng.normal(0, 30, 6), rng.normal(0, 5, 6) * (k % 2)
            want = criterion.ratio(sm, sf, p)
            if form == FAST:
                assert criterion.point(sm, sf, c, 1) == want
            elif form == SKIP:
                assert want == (np.inf, -1)


def _random_model(n=60, ncase=3, seed=1):
    rng = np.random.default_rng(seed)
    secs = sections()
    tables = build_tables(secs)
    cell_sec = rng.integers(0, len(secs), n)
    phi = rng.uniform(-180, 180, n)
    R = rng.normal(0, 1, (ncase, n, 8)) * np.array([50, 50, 30, 20, 20, 10, 5, 5])
    dT = rng.uniform(-120, 60, (ncase, n))
    dM = np.array([0.0, 0.004, 0.0])[:ncase]
    pres = np.array([0.0, 0.0, 0.2])[:ncase]
    fos = np.array([1.5, 1.0, 1.5])[:ncase]
    return tables, cell_sec, phi, R, dT, dM, pres, fos


def test_kernel_matches_numpy_reference():
    tables, cell_sec, phi, R, dT, dM, pres, fos = _random_model()
    crit = tuple(CRITERIA)
    env, cells, plies = recover_cells(crit, tables, cell_sec, phi, R, dT, dM, pres, fos, store_plies=True)
    ref = ply_states(tables, cell_sec, phi, R, dT, dM, pres)
    for name in ("stress", "strain"):
        np.testing.assert_allclose(plies[name], ref[name], rtol=1e-9, atol=1e-9 * np.nanmax(np.abs(ref[name])))
    np.testing.assert_allclose(plies["transverse_shear"], ref["shear"], rtol=1e-9, atol=1e-12)
    # Reference envelope: every criterion on the reference states (postproc.states: the block driver per point,
    # face means for the face-level criteria), margins by case.
    from postproc.states import cell_states
    n, mp = len(cell_sec), tables.max_plies
    pidx = np.full((n, mp), -1)
    for i, s in enumerate(cell_sec):
        pidx[i, :tables.nply[s]] = tables.first[s] + np.arange(tables.nply[s])
    ratio = cell_states(crit, tables, cell_sec, phi, R, dT, dM, pres)["ratio"]   # (ncrit, ncase, ncell, mp, 3)
    ms = ratio / fos[None, :, None, None, None] - 1.0
    best = np.where(np.isnan(ms), np.inf, ms).min(axis=(0, 1, 4))
    valid = pidx >= 0
    np.testing.assert_allclose(env["margin"][valid], best[valid], rtol=1e-9)
    assert np.all(np.isnan(env["margin"][~valid]))
    np.testing.assert_allclose(cells["min_margin"], np.nanmin(np.where(valid, best, np.nan), axis=1), rtol=1e-9)


def _one_cell(lam, R, criteria, dT=0.0, fos=1.5, phi=0.0):
    sec = build_section(lam)
    tables = build_tables([sec])
    R = np.asarray(R, dtype=float).reshape(1, 1, 8)
    return recover_cells(criteria, tables, np.array([0]), np.array([phi]), R, np.array([[dT]]), np.zeros(1),
                         np.zeros(1), np.array([fos]), store_plies=True)


KAW_PLAIN = Orthotropic("kaw", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246,
                        S12=68).validate()


@pytest.mark.parametrize("name, expected", [
    # Kaw (2006), Example 2.x, 60° lamina under (σx, σy, τxy) = (2, −3, 4) MPa (from memory, re-derived):
    # max stress 16.33 (shear governs), Tsai-Hill 16.06, Tsai-Wu 22.39.
    ("max-stress", 16.33), ("tsai-hill", 16.06), ("tsai-wu", 22.39),
])
def test_hand_recovery_of_kaw_lamina(name, expected):
    # A one-ply laminate of unit thickness carrying N = σ·h reproduces the lamina state exactly.
    lam = Laminate("one", (Ply(KAW_PLAIN, 60.0, 1.0),))
    env, cells, plies = _one_cell(lam, [2.0, -3.0, 4.0, 0, 0, 0, 0, 0], (by_name(name),), fos=1.5)
    np.testing.assert_allclose(plies["stress"][0, 0, 0, 1], [1.714, -2.714, -4.165], rtol=1e-3)
    np.testing.assert_allclose(env["strength_ratio"][0, 0], expected, rtol=2e-3)
    np.testing.assert_allclose(env["margin"][0, 0], expected / 1.5 - 1.0, rtol=3e-3)
    assert cells["critical_ply"][0] == 1


def test_rotation_by_material_angle_is_the_same_as_rotating_the_plies():
    # Invariance: resultants given in an element frame rotated by −φ from the laminate axes, with material
    # angle φ, give the same ply stresses as the laminate-axis problem.
    lam = Laminate("u", (Ply(KAW, 30, 0.2), Ply(KAW, -45, 0.3)))
    N = np.array([40.0, -10.0, 7.0])
    M = np.array([2.0, 1.0, -0.5])
    Q = np.array([3.0, -1.0])
    phi = 35.0
    from shells.rotation import shear_rotation, stress_rotation
    T = stress_rotation(phi)            # laminate axes (at +φ) → element frame
    Rq = shear_rotation(phi).T
    Re = np.concatenate([T @ N, T @ M, Rq @ Q])
    a = _one_cell(lam, np.concatenate([N, M, Q]), CRITERIA[:1])[2]
    b = _one_cell(lam, Re, CRITERIA[:1], phi=phi)[2]
    for k in ("stress", "strain", "transverse_shear"):
        np.testing.assert_allclose(b[k], a[k], rtol=1e-10, atol=1e-12)


def test_thermal_residual_is_held_in_the_strength_ratio():
    # Hand derivation for the symmetric cross-ply [0/90]s (equal plies) cooled by ΔT with a load Ny:
    # the mid-plane strain under ΔT is equibiaxial, ε_T = N_T/(A11 + A12) ΔT with N_T = h/2((Q11+Q12)α1 +
    # (Q12+Q22)α2) and A11 = (Q11+Q22)h/2, A12 = Q12 h; the 0° ply then carries
    # σ2_T = Q12(ε_T − α1ΔT) + Q22(ε_T − α2ΔT). Max stress in matrix tension: R = (Yt − σ2_T)/σ2_mech.
    m = Orthotropic("m", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246,
                    S12=68, alpha1=0.02e-6, alpha2=22.5e-6).validate()
    t, dT, Ny = 0.25, -100.0, 20.0
    lam = Laminate("cp", (Ply(m, 0, t), Ply(m, 90, t), Ply(m, 90, t), Ply(m, 0, t)))
    Q = m.Q()
    h = 4 * t
    a1, a2 = m.alpha1, m.alpha2
    NT = h / 2 * ((Q[0, 0] + Q[0, 1]) * a1 + (Q[0, 1] + Q[1, 1]) * a2)
    eT = NT / ((Q[0, 0] + Q[1, 1]) * h / 2 + Q[0, 1] * h) * dT
    s2T = Q[0, 1] * (eT - a1 * dT) + Q[1, 1] * (eT - a2 * dT)
    A = np.array([[(Q[0, 0] + Q[1, 1]) * h / 2, Q[0, 1] * h], [Q[0, 1] * h, (Q[0, 0] + Q[1, 1]) * h / 2]])
    ex, ey = np.linalg.solve(A, [0.0, Ny])
    s2m = Q[0, 1] * ex + Q[1, 1] * ey           # σ2 of the 0° ply (its 2 axis is y)
    expected = (40.0 - s2T) / s2m
    env, _, plies = _one_cell(lam, [0, Ny, 0, 0, 0, 0, 0, 0], (by_name("max-stress"),), dT=dT, fos=1.0)
    np.testing.assert_allclose(plies["stress"][0, 0, 0, 1, 1], s2T + s2m, rtol=1e-9)
    np.testing.assert_allclose(env["strength_ratio"][0, 0], expected, rtol=1e-9)


def test_nonfinite_cells_are_flagged_and_the_rest_computed():
    tables, cell_sec, phi, R, dT, dM, pres, fos = _random_model(n=10)
    R[1, 3, 2] = np.nan
    R[:, 5, 0] = np.inf
    env, cells, _ = recover_cells(CRITERIA[:4], tables, cell_sec, phi, R, dT, dM, pres, fos)
    assert cells["flagged"].tolist() == [i in (3, 5) for i in range(10)]
    assert np.isnan(cells["min_margin"][5]) and np.isfinite(cells["min_margin"][3])
    assert np.isnan(cells["case_margin"][3, 1]) and np.all(np.isfinite(cells["min_margin"][[0, 1, 2, 4]]))


def test_envelope_merges_across_case_blocks():
    # Recovering cases in two blocks (case0 offset) gives the same envelope as one block.
    tables, cell_sec, phi, R, dT, dM, pres, fos = _random_model(n=20)
    whole = recover_cells(CRITERIA[:4], tables, cell_sec, phi, R, dT, dM, pres, fos)[0]
    env = Envelope.empty(20, tables.max_plies, 3, len(CRITERIA))
    for lo, hi in ((0, 2), (2, 3)):
        recover_into(env, CRITERIA[:4], tables, cell_sec, phi, R[lo:hi], dT[lo:hi], dM[lo:hi], pres[lo:hi],
                     fos[lo:hi], case0=lo)
    done = env.finish(tables.nply[cell_sec])
    np.testing.assert_array_equal(done.margin, whole["margin"])
    np.testing.assert_array_equal(done.case, whole["case"])


def test_precomputed_transverse_shear_replaces_the_q_distribution():
    # The hook for a transverse shear field: given τ = F·(Qx, Qy) in laminate axes (computed here in numpy from
    # the section tables), with Qx, Qy then removed from the resultants, the kernel reproduces the normal path.
    tables, cell_sec, phi, R, dT, dM, pres, fos = _random_model(n=12)
    crit = tuple(CRITERIA)
    env0, cells0, plies0 = recover_cells(crit, tables, cell_sec, phi, R, dT, dM, pres, fos, store_plies=True)
    p = np.radians(phi)
    qx = np.cos(p) * R[..., 6] + np.sin(p) * R[..., 7]           # element frame → laminate axes
    qy = -np.sin(p) * R[..., 6] + np.cos(p) * R[..., 7]
    field = np.zeros(R.shape[:2] + (tables.max_plies, 3, 2))
    for i, s in enumerate(cell_sec):
        rows = tables.first[s] + np.arange(tables.nply[s])
        Fk = tables.F[rows]                                       # (nply, 3, 2, 2)
        field[:, i, :len(rows)] = (np.einsum("kqab,jb->jkqa", Fk, np.stack([qx[:, i], qy[:, i]], axis=-1)))
    R_noq = R.copy()
    R_noq[..., 6:] = 0.0
    env1, cells1, plies1 = recover_cells(crit, tables, cell_sec, phi, R_noq, dT, dM, pres, fos, store_plies=True,
                                         shear=field)
    np.testing.assert_allclose(plies1["transverse_shear"], plies0["transverse_shear"], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(env1["margin"], env0["margin"], rtol=1e-9)
    # A different field changes the transverse shear output accordingly (rotated into material axes).
    env2, _, plies2 = recover_cells(crit, tables, cell_sec, phi, R_noq, dT, dM, pres, fos, store_plies=True,
                                    shear=2.0 * field)
    np.testing.assert_allclose(plies2["transverse_shear"], 2.0 * plies0["transverse_shear"], rtol=1e-12,
                               atol=1e-12)
    with pytest.raises(Exception, match="transverse shear field"):
        recover_cells(crit, tables, cell_sec, phi, R, dT, dM, pres, fos, shear=field[:, :3])


def test_round_off_states_give_infinite_ratio():
    # Free faces carry no transverse shear (τ = 0 at z = ±h/2 by the boundary condition), and under pure bending
    # of a symmetric laminate the mid-plane carries no in-plane stress. Computed through the thickness these come
    # out as round-off (1e-16 of the peak), which gave strength ratios near 1e17; they are exactly zero now
    # (docs/criteria.md, "Round-off"), so the ratio is inf with no mode.
    lam = Laminate("q", tuple(Ply(KAW, a, 0.13) for a in (0, 45, -45, 90, 90, -45, 45, 0)))
    sec = build_section(lam)
    tables = build_tables([sec])
    assert np.all(tables.F[0, 0] == 0.0) and np.all(tables.F[-1, 2] == 0.0)
    assert tables.z[3, 2] == 0.0 and tables.z[4, 0] == 0.0          # the mid-plane, exactly
    from postproc.states import cell_states
    inter, stress = by_name("interlaminar"), by_name("max-stress")
    R = np.array([[[0, 0, 0, 0, 0, 0, 10.0, -4.0]]])
    st = cell_states((inter,), tables, np.array([0]), np.array([0.0]), R, np.zeros((1, 1)), np.zeros(1), np.zeros(1))
    ratio = st["ratio"][0, 0, 0]                                     # (ply, point)
    assert ratio[0, 0] == np.inf and ratio[-1, 2] == np.inf and np.all(np.isfinite(ratio[1:-1][:, [0, 2]]))
    env, _, plies = _one_cell(lam, R[0, 0], (inter,))
    assert np.all(plies["transverse_shear"][0, 0, 0, 0] == 0.0) and np.all(plies["transverse_shear"][0, 0, -1, 2] == 0)
    M = np.array([[[0, 0, 0, 25.0, -8.0, 3.0, 0, 0]]])
    st = cell_states((stress,), tables, np.array([0]), np.array([0.0]), M, np.zeros((1, 1)), np.zeros(1), np.zeros(1))
    assert st["ratio"][0, 0, 0, 3, 2] == np.inf and st["ratio"][0, 0, 0, 4, 0] == np.inf
    assert np.all(st["mech"][0, 0, 3, 2] == 0.0)
    env, _, _ = _one_cell(lam, M[0, 0], (stress,))
    assert np.isfinite(env["strength_ratio"][0, 3])                # the ply's outer face still governs
