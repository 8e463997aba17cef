"""Engineering constants: about the mid-plane whatever the offset; restrained and free sets; bounds.

Sources and derivations:
- Tsai & Hahn, Introduction to Composite Materials (1980), quasi-isotropic [0/±45/90]s of the carbon/epoxy
  E1 181, E2 10.3, G12 7.17 GPa, nu12 0.28: E = 69.68 GPa (from memory, re-derived from the invariants).
- Classical lamination closed forms for a two-ply [0/90] stack written out in the test (common practice).
- Bounds derived here: for plies of one material with E2 ≤ E1 and G12 ≤ E1/(2(1 + ν12)), every direction's
  modulus of the ply is at most E1; a laminate modulus 1/(h·a11) is at most A11/h, a weighted mean of the
  plies' Q̄11, and minimising the strain energy over the free strains of the sum is at least the sum of the
  minima; the free compliance exceeds the restrained one by a positive semi-definite term.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from shells.engineering import engineering_constants, flags, flexural_constants, membrane_constants
from shells.laminate import Laminate, Ply, section_properties
from shells.materials import Isotropic, Orthotropic
from shells.rotation import rotate_plane_stiffness

KAW = Orthotropic("kaw-graphite-epoxy", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28).validate()
QI = (0, 45, -45, 90, 90, -45, 45, 0)


@pytest.mark.parametrize("offset", [0.0, 0.5, -0.5, 3.0])
def test_quasi_isotropic_constants_ignore_the_offset(offset):
    lam = Laminate("qi", tuple(Ply(KAW, a, 0.125) for a in QI), offset)
    sp = section_properties(lam)
    base = section_properties(lam.with_offset(0.0))
    # Tsai & Hahn (1980): membrane E = 69.68 GPa, any offset (the offset moves the reference, not the laminate).
    assert membrane_constants(sp)["Ex"] / 1e3 == pytest.approx(69.68, rel=2e-3)
    for part in ("membrane", "flexural"):
        for variant in ("restrained", "free"):
            got = engineering_constants(sp)[part][variant]
            want = engineering_constants(base)[part]["restrained"]
            for key in ("Ex", "Ey", "Gxy", "nuxy"):
                assert got[key] == pytest.approx(want[key], rel=1e-9)
    # Symmetric stack: no mid-plane coupling even with an offset (B about the reference is e·A).
    f = flags(lam, sp)
    assert not f["mid_plane_coupled"] and f["coupled"] == (offset != 0)
    assert engineering_constants(sp)["flexural"]["restrained"]["Ex"] < KAW.E1


def test_cross_ply_two_layers_free_and_restrained_closed_form():
    # [0/90], plies t thick, ply 1 (0°) at the bottom: A11 = A22 = (Q11 + Q22) t, A12 = 2 Q12 t, A66 = 2 Q66 t;
    # B11 = −B22 = (Q22 − Q11) t²/2; D11 = D22 = (Q11 + Q22) t³/3, D12 = 2 Q12 t³/3, D66 = 2 Q66 t³/3.
    t = 0.25
    Q = KAW.Q()
    q11, q12, q22, q66 = Q[0, 0], Q[0, 1], Q[1, 1], Q[2, 2]
    A = np.array([[q11 + q22, 2 * q12, 0], [2 * q12, q11 + q22, 0], [0, 0, 2 * q66]]) * t
    B = np.diag([q22 - q11, q11 - q22, 0.0]) * t * t / 2
    D = np.array([[q11 + q22, 2 * q12, 0], [2 * q12, q11 + q22, 0], [0, 0, 2 * q66]]) * t ** 3 / 3
    h = 2 * t
    # Free membrane: N = (1, 0, 0), M = 0 → solve the coupled 6×6 written here; Ex = 1/(h εx).
    free = np.linalg.solve(np.block([[A, B], [B, D]]), [1, 0, 0, 0, 0, 0])
    restrained = np.linalg.solve(A, [1, 0, 0])
    bend_free = np.linalg.solve(np.block([[A, B], [B, D]]), [0, 0, 0, 1, 0, 0])
    bend_restrained = np.linalg.solve(D, [1, 0, 0])
    lam = Laminate("cp", (Ply(KAW, 0.0, t), Ply(KAW, 90.0, t)))
    c = engineering_constants(section_properties(lam))
    assert c["membrane"]["free"]["Ex"] == pytest.approx(1 / (h * free[0]), rel=1e-10)
    assert c["membrane"]["restrained"]["Ex"] == pytest.approx(1 / (h * restrained[0]), rel=1e-10)
    assert c["flexural"]["free"]["Ex"] == pytest.approx(12 / (h ** 3 * bend_free[3]), rel=1e-10)
    assert c["flexural"]["restrained"]["Ex"] == pytest.approx(12 / (h ** 3 * bend_restrained[0]), rel=1e-10)
    assert c["membrane"]["free"]["Ex"] < c["membrane"]["restrained"]["Ex"]
    assert flags(lam, section_properties(lam))["mid_plane_coupled"]


def test_isotropic_plate_flexural_modulus_with_offset():
    # Homogeneous isotropic plate (closed form): every constant is E, ν, E/(2(1 + ν)), any offset.
    al = Isotropic("al", E=70e3, nu=0.3).validate()
    sp = section_properties(Laminate("al", (Ply(al, 0.0, 2.0),), offset=-1.0))
    fc = flexural_constants(sp)
    np.testing.assert_allclose([fc["Ex"], fc["nuxy"], fc["Gxy"]], [70e3, 0.3, 70e3 / 2.6], rtol=1e-12)


def _moduli(sp):
    c = engineering_constants(sp)
    return {(p, v, k): c[p][v][k] for p in c for v in c[p] for k in ("Ex", "Ey")}


plausible_ply = st.builds(
    lambda e1, r2, rg, nu: Orthotropic("r", E1=e1, E2=e1 * r2, G12=rg * e1 / (2 * (1 + nu)), nu12=nu),
    st.floats(5e3, 500e3), st.floats(0.02, 1.0), st.floats(0.02, 1.0), st.floats(0.0, 0.45))


@settings(max_examples=80, deadline=None)
@given(plausible_ply, st.lists(st.tuples(st.floats(-90, 90), st.floats(0.05, 2.0)), min_size=1, max_size=10),
       st.floats(-2.0, 2.0))
def test_no_laminate_modulus_exceeds_the_ply_modulus(mat, plies, offset_ratio):
    lam = Laminate("r", tuple(Ply(mat, a, t) for a, t in plies))
    sp = section_properties(lam.with_offset(offset_ratio * lam.thickness))
    if np.linalg.cond(sp.ABD) > 1e12:
        return
    m = _moduli(sp)
    for key, value in m.items():
        assert 0 < value <= mat.E1 * (1 + 1e-9), (key, value, mat.E1)
    for part in ("membrane", "flexural"):
        for k in ("Ex", "Ey"):
            assert m[(part, "free", k)] <= m[(part, "restrained", k)] * (1 + 1e-9)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(plausible_ply, st.floats(-90, 90), st.floats(0.05, 2.0)), min_size=1, max_size=6),
       st.floats(-2.0, 2.0))
def test_mixed_stacks_stay_below_the_stiffest_ply_direction(plies, offset_ratio):
    lam = Laminate("r", tuple(Ply(m, a, t) for m, a, t in plies))
    sp = section_properties(lam.with_offset(offset_ratio * lam.thickness))
    if np.linalg.cond(sp.ABD) > 1e12:
        return
    angles = np.linspace(0, 180, 721)
    bound = max(rotate_plane_stiffness(m.Q(), angles)[:, 0, 0].max() for m, _, _ in plies)
    for key, value in _moduli(sp).items():
        assert 0 < value <= bound * (1 + 1e-4), (key, value, bound)


def test_polar_moduli_from_stored_stiffness_match_the_section():
    """A section read back as A, B, D, thickness and offset (the results store) gives the same polar moduli."""
    from types import SimpleNamespace

    from shells.engineering import polar_moduli

    sp = section_properties(Laminate("qi", tuple(Ply(KAW, a, 0.125) for a in QI), 0.5))
    stored = SimpleNamespace(A=sp.A, B=sp.B, D=sp.D, thickness=sp.thickness, offset=0.5)
    angles = np.linspace(0, 180, 7)
    a, b = polar_moduli(sp, angles), polar_moduli(stored, angles)
    np.testing.assert_allclose(b["flexural"], a["flexural"], rtol=1e-12)
    base = polar_moduli(section_properties(Laminate("qi", tuple(Ply(KAW, x, 0.125) for x in QI))), angles)
    np.testing.assert_allclose(a["flexural"], base["flexural"], rtol=1e-9)      # offset-free, as constants
