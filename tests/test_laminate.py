"""Laminate mechanics against published worked examples and closed forms."""

from __future__ import annotations

import numpy as np
import pytest

from shells.engineering import flags, flexural_constants, membrane_constants
from shells.laminate import Laminate, Ply, interfaces, section_properties
from shells.materials import Isotropic, Orthotropic
from shells.rotation import rotate_plane_stiffness, stress_to_rotated, strain_to_rotated
from shells.section import build_section
from shells.shear import shear_correction_factors, shear_distribution

# Graphite/epoxy of Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1; MPa.
KAW = Orthotropic("kaw-graphite-epoxy", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28,
                  Xt=1500, Xc=1500, Yt=40, Yc=246, S12=68).validate()


def single_ply(angle, material=KAW, t=1.0):
    return Laminate("one", (Ply(material, angle, t),))


def test_kaw_reduced_stiffness():
    # Kaw (2006), Example 2.6: Q11 181.8, Q12 2.897, Q22 10.35, Q66 7.17 GPa.
    Q = KAW.Q() / 1e3
    np.testing.assert_allclose([Q[0, 0], Q[0, 1], Q[1, 1], Q[2, 2]], [181.8, 2.897, 10.35, 7.17], rtol=2e-3)


def test_kaw_transformed_stiffness_60deg():
    # Kaw (2006), Example 2.7: Q̄ of the 60° lamina in GPa (11, 12, 16, 22, 26, 66).
    Qb = rotate_plane_stiffness(KAW.Q(), 60.0) / 1e3
    got = [Qb[0, 0], Qb[0, 1], Qb[0, 2], Qb[1, 1], Qb[1, 2], Qb[2, 2]]
    np.testing.assert_allclose(got, [23.65, 32.46, 20.05, 109.4, 54.19, 36.74], rtol=2e-3)


def test_kaw_transformed_stiffness_30deg_swaps():
    # Same source: at 30° the 11↔22 and 16↔26 entries swap relative to 60°.
    a, b = rotate_plane_stiffness(KAW.Q(), 60.0), rotate_plane_stiffness(KAW.Q(), 30.0)
    np.testing.assert_allclose([b[0, 0], b[0, 2]], [a[1, 1], a[1, 2]], rtol=1e-12)


def test_kaw_engineering_constants_60deg():
    # Kaw (2006), Example 2.8 (from memory, re-derived from S̄): Ex 12.42, Ey 28.78, Gxy 8.761 GPa, nuxy 0.09783.
    c = membrane_constants(section_properties(single_ply(60.0)))
    np.testing.assert_allclose([c["Ex"] / 1e3, c["Ey"] / 1e3, c["Gxy"] / 1e3, c["nuxy"]],
                               [12.42, 28.78, 8.761, 0.09783], rtol=2e-3)


def test_kaw_stress_and_strain_transformation_60deg():
    # Kaw (2006), Example 2.x (from memory, re-derived): (σx, σy, τxy) = (2, −3, 4) MPa on the 60° lamina gives
    # σ1 1.714, σ2 −2.714, τ12 −4.165 MPa and ε1 1.367e-5, ε2 −2.662e-4, γ12 −5.809e-4.
    sig = stress_to_rotated(np.array([2.0, -3.0, 4.0]), 60.0)
    np.testing.assert_allclose(sig, [1.714, -2.714, -4.165], rtol=1e-3)
    eps_xy = np.linalg.solve(rotate_plane_stiffness(KAW.Q(), 60.0), [2.0, -3.0, 4.0])
    np.testing.assert_allclose(strain_to_rotated(eps_xy, 60.0), [1.367e-5, -2.662e-4, -5.809e-4], rtol=2e-3)


def test_quasi_isotropic_tsai_hahn():
    # Tsai & Hahn, Introduction to Composite Materials (1980), invariants of the same carbon/epoxy
    # (from memory, re-derived): U1 76.37, U4 22.61, U5 26.88 GPa; [0/±45/90]s: E 69.68 GPa, nu 0.296, G 26.88 GPa.
    Q = KAW.Q() / 1e3
    U1 = (3 * Q[0, 0] + 3 * Q[1, 1] + 2 * Q[0, 1] + 4 * Q[2, 2]) / 8
    U4 = (Q[0, 0] + Q[1, 1] + 6 * Q[0, 1] - 4 * Q[2, 2]) / 8
    U5 = (Q[0, 0] + Q[1, 1] - 2 * Q[0, 1] + 4 * Q[2, 2]) / 8
    np.testing.assert_allclose([U1, U4, U5], [76.37, 22.61, 26.88], rtol=2e-3)
    lam = Laminate("qi", tuple(Ply(KAW, a, 0.125) for a in (0, 45, -45, 90, 90, -45, 45, 0)))
    sp = section_properties(lam)
    A = sp.A
    assert abs(A[0, 0] - A[1, 1]) < 1e-9 * A[0, 0]
    assert abs(A[0, 2]) < 1e-9 * A[0, 0] and abs(A[1, 2]) < 1e-9 * A[0, 0]
    assert abs(A[2, 2] - (A[0, 0] - A[0, 1]) / 2) < 1e-9 * A[0, 0]
    c = membrane_constants(sp)
    np.testing.assert_allclose([c["Ex"] / 1e3, c["Ey"] / 1e3, c["nuxy"], c["Gxy"] / 1e3],
                               [69.68, 69.68, 0.296, 26.88], rtol=2e-3)
    f = flags(lam, sp)
    assert f["quasi_isotropic"] and f["symmetric"] and f["balanced"] and not f["coupled"]
    assert f["bending_twist"]  # ±45 plies off the mid-plane couple bending and twisting (common practice)


@pytest.mark.parametrize("angles", [(0, 90, 90, 0), (30, -30, -30, 30), (0, 45, -45, 90, 90, -45, 45, 0)])
def test_symmetric_stacks_have_no_coupling(angles):
    # Closed form: B = Σ Q̄ (z_t² − z_b²)/2 vanishes for a mid-plane-symmetric stack.
    sp = section_properties(Laminate("s", tuple(Ply(KAW, a, 0.2) for a in angles)))
    assert np.abs(sp.B).max() < 1e-10 * np.abs(sp.A).max()


def test_unsymmetric_cross_ply_coupling_sign():
    # Closed form for [0/90] with ply 1 (0°) at the bottom, plies of thickness t:
    # B11 = (t²/2)(Q22 − Q11) < 0, B22 = −B11, B12 = B66 = 0.
    t = 0.25
    sp = section_properties(Laminate("u", (Ply(KAW, 0, t), Ply(KAW, 90, t))))
    Q = KAW.Q()
    np.testing.assert_allclose(sp.B[0, 0], t * t / 2 * (Q[1, 1] - Q[0, 0]), rtol=1e-12)
    np.testing.assert_allclose(sp.B[1, 1], -sp.B[0, 0], rtol=1e-12)
    assert sp.B[0, 0] < 0 and abs(sp.B[0, 1]) < 1e-9 and abs(sp.B[2, 2]) < 1e-9
    lam = Laminate("u", (Ply(KAW, 0, t), Ply(KAW, 90, t)))
    assert flags(lam, sp)["coupled"] and not flags(lam, sp)["symmetric"]


def test_offset_reference_parallel_axis():
    # Closed form (parallel-axis theorem): moving the reference by e gives B' = B − e·A... with offset e of the
    # mid-plane above the reference: z → z + e, so B' = B + e A and D' = D + 2 e B + e² A.
    lam = Laminate("o", tuple(Ply(KAW, a, 0.2) for a in (0, 45, 90)))
    e = 0.7
    sp0, sp1 = section_properties(lam), section_properties(lam.with_offset(e))
    np.testing.assert_allclose(sp1.A, sp0.A)
    np.testing.assert_allclose(sp1.B, sp0.B + e * sp0.A, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(sp1.D, sp0.D + 2 * e * sp0.B + e * e * sp0.A, rtol=1e-12, atol=1e-6)
    np.testing.assert_allclose(sp1.z, interfaces([0.2] * 3, e))


def test_isotropic_plate_closed_form():
    # Closed form: A = E h/(1−ν²)[..], D = E h³/(12(1−ν²)) for a homogeneous isotropic plate.
    al = Isotropic("al", E=70e3, nu=0.3).validate()
    h = 2.0
    sp = section_properties(Laminate("al", (Ply(al, 0.0, h),)))
    np.testing.assert_allclose(sp.D[0, 0], 70e3 * h ** 3 / (12 * (1 - 0.09)), rtol=1e-12)
    fc = flexural_constants(sp)
    np.testing.assert_allclose([fc["Ex"], fc["nuxy"], fc["Gxy"]], [70e3, 0.3, 70e3 / 2.6], rtol=1e-12)


# Pagano (1970) plate material: E_L/E_T 25, G_LT/E_T 0.5, G_TT/E_T 0.2, nu 0.25.
PAGANO = Orthotropic("pagano", E1=25.0, E2=1.0, G12=0.5, nu12=0.25, G13=0.5, G23=0.2).validate()


def test_single_ply_shear_factor_and_parabola():
    # Closed form: a homogeneous ply has k = 5/6 and τ(z) = 1.5 Q/h (1 − 4z²/h²), τmax = 1.5 Q/h.
    sp = section_properties(single_ply(0.0, PAGANO, 2.0))
    np.testing.assert_allclose(shear_correction_factors(sp), [5 / 6, 5 / 6], rtol=1e-12)
    F = shear_distribution(sp, np.linspace(0, 1, 5))[0]
    z = np.linspace(-1, 1, 5)
    np.testing.assert_allclose(F[:, 0, 0], 1.5 / 2.0 * (1 - z ** 2), atol=1e-12)
    np.testing.assert_allclose(F[:, 1, 1], 1.5 / 2.0 * (1 - z ** 2), atol=1e-12)


@pytest.mark.parametrize("angles, expected", [
    # Energy-consistent factors for the Pagano material (Rolfes & Rohwer 1997 method; values from memory,
    # re-derived independently): [0/90/0] kx 0.583, ky 0.802;
    # [0/90]s kx 0.595, ky 0.720.
    ((0, 90, 0), (0.583, 0.802)),
    ((0, 90, 90, 0), (0.595, 0.720)),
])
def test_cross_ply_energy_consistent_shear_factors(angles, expected):
    sp = section_properties(Laminate("x", tuple(Ply(PAGANO, a, 1.0) for a in angles)))
    np.testing.assert_allclose(shear_correction_factors(sp), expected, atol=1.5e-3)


def test_thermal_resultants_closed_form():
    # Closed form for a single 0° ply: N_T = Q α h, M_T = 0 about the mid-plane.
    m = Orthotropic("t", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, alpha1=0.02e-6, alpha2=22.5e-6).validate()
    sp = section_properties(single_ply(0.0, m, 0.5))
    np.testing.assert_allclose(sp.NT, m.Q() @ m.alpha() * 0.5, rtol=1e-12)
    np.testing.assert_allclose(sp.MT, 0.0, atol=1e-15)


def test_sandwich_section_and_face_allowables():
    # A core carries no in-plane load: A equals that of the two faces, D follows the parallel-axis theorem
    # (closed form); the face plies get a wrinkling allowable k (Ef Ec Gc)^(1/3), the core none.
    from shells.materials import Core
    core = Core("hc", G13=40.0, G23=25.0, Ez=140.0, cell_size=3.2).validate()
    lam = Laminate("sw", (Ply(KAW, 0, 0.5), Ply(core, 0, 10.0), Ply(KAW, 0, 0.5)))
    sec = build_section(lam)
    Q = KAW.Q()
    np.testing.assert_allclose(sec.props.A, 2 * 0.5 * Q, rtol=1e-12)
    d = 10.5  # distance between face centroids
    np.testing.assert_allclose(sec.props.D, Q * (2 * 0.5 ** 3 / 12 + 2 * 0.5 * (d / 2) ** 2), rtol=1e-12)
    from shells import params as P
    wr = sec.ply_params[:, P.WRINKLING]
    assert np.isfinite(wr[0]) and np.isfinite(wr[2]) and np.isnan(wr[1])
    # Face = one 0° ply: membrane Ex = E1, Ey = E2, so Ef = min = E2; Gc = min(G13, G23) = 25 MPa.
    np.testing.assert_allclose(wr[0], 0.5 * (10.3e3 * 140.0 * 25.0) ** (1 / 3), rtol=1e-12)
