"""The closed-form values of shells/published_sections.py, re-derived here by hand (plain numpy, no plybridge).

Material: Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 graphite/epoxy: E1 181, E2 10.3,
G12 7.17 GPa, ν12 0.28, α1 0.02e-6, α2 22.5e-6 /°C, Yt 40 MPa. Reduced stiffness Q11 = E1/(1 − ν12ν21) etc.
(Kaw 2006, eq. 2.93). Strength ratio with a held residual stress (Kaw 2006, ch. 4 and the definition in
docs/conventions.md): σ_fixed + R·σ_mech reaches the allowable.
"""

from __future__ import annotations

import numpy as np
import pytest

from shells.published_sections import SECTION_CASES

E1, E2, G12, NU12 = 181e3, 10.3e3, 7.17e3, 0.28
NU21 = NU12 * E2 / E1
DEN = 1 - NU12 * NU21
Q11, Q22, Q12 = E1 / DEN, E2 / DEN, NU12 * E2 / DEN
A1, A2 = 0.02e-6, 22.5e-6
EXPECTED = {c.case: c.expected for c in SECTION_CASES}


def test_cross_ply_thermal_closed_form():
    t, dT = 0.125, -75.0
    nt = 2 * t * ((Q11 + Q12) * A1 + (Q12 + Q22) * A2)      # two 0° and two 90° plies, equibiaxial
    eps0 = ((Q11 + Q12) * A1 + (Q12 + Q22) * A2) / (Q11 + Q22 + 2 * Q12) * dT
    s1 = Q11 * (eps0 - A1 * dT) + Q12 * (eps0 - A2 * dT)
    s2 = Q12 * (eps0 - A1 * dT) + Q22 * (eps0 - A2 * dT)
    assert EXPECTED["thermal-NT"] == pytest.approx(nt, rel=1e-4)
    assert EXPECTED["thermal-s1"] == pytest.approx(s1, rel=1e-4)
    assert EXPECTED["thermal-s2"] == pytest.approx(s2, rel=1e-4)
    # Nx = 50 N/mm: ε = A⁻¹ N with A11 = A22 = 2t(Q11 + Q22), A12 = 4t Q12; in the 90° plies σ2 is along x.
    A11, A12 = 2 * t * (Q11 + Q22), 4 * t * Q12
    ex, ey = np.linalg.solve([[A11, A12], [A12, A11]], [50.0, 0.0])
    s2_mech_90 = Q12 * ey + Q22 * ex
    assert EXPECTED["held-thermal-ratio"] == pytest.approx((40.0 - s2) / s2_mech_90, rel=1e-4)


def test_unsymmetric_cross_ply_closed_form():
    t = 0.25
    A = np.array([[Q11 + Q22, 2 * Q12], [2 * Q12, Q11 + Q22]]) * t
    B = np.diag([Q22 - Q11, Q11 - Q22]) * t * t / 2
    D = np.array([[Q11 + Q22, 2 * Q12], [2 * Q12, Q11 + Q22]]) * t ** 3 / 3
    sol = np.linalg.solve(np.block([[A, B], [B, D]]), [100.0, 0, 0, 0])
    e0, k = sol[:2], sol[2:]
    ex, ey = e0 - t * k                       # bottom face of the 0° ply (ply 1)
    assert EXPECTED["coupled-0-90-s1"] == pytest.approx(Q11 * ex + Q12 * ey, rel=1e-4)
    ex, ey = e0 + t * k                       # top face of the 90° ply: σ2 along x
    assert EXPECTED["coupled-0-90-s2"] == pytest.approx(Q12 * ey + Q22 * ex, rel=1e-4)


def test_sandwich_closed_forms():
    tf, c, Q = 0.5, 10.0, 100.0
    d = c + tf
    # Allen (1969): core shear Q/D · Ef tf d/2 with D = Ef (tf d²/2 + tf³/6) for a core without in-plane stiffness.
    assert EXPECTED["sandwich-core-shear"] == pytest.approx(Q * tf * d / 2 / (tf * d * d / 2 + tf ** 3 / 6), rel=1e-4)
    assert EXPECTED["sandwich-wrinkling"] == pytest.approx(0.5 * (70e3 * 130.0 * 20.0) ** (1 / 3), rel=1e-4)


def test_kaw_example_4_2_entries():
    # A11 = Σ Q̄11 t and B11 = Σ Q̄11 (z_t² − z_b²)/2 over 0°, 30°, −45° plies of 5 mm (z = −7.5 … 7.5 mm);
    # Q̄11(θ) = Q11 c⁴ + 2(Q12 + 2Q66) s²c² + Q22 s⁴ (Kaw 2006, eq. 2.104).
    def qbar11(theta):
        c, s = np.cos(np.radians(theta)), np.sin(np.radians(theta))
        return Q11 * c ** 4 + 2 * (Q12 + 2 * G12) * s * s * c * c + Q22 * s ** 4

    def qbar12(theta):
        c, s = np.cos(np.radians(theta)), np.sin(np.radians(theta))
        return (Q11 + Q22 - 4 * G12) * s * s * c * c + Q12 * (c ** 4 + s ** 4)

    z = np.array([-7.5, -2.5, 2.5, 7.5])
    angles = (0, 30, -45)
    A11 = sum(qbar11(a) * 5.0 for a in angles)
    A12 = sum(qbar12(a) * 5.0 for a in angles)
    B11 = sum(qbar11(a) * (z[k + 1] ** 2 - z[k] ** 2) / 2 for k, a in enumerate(angles))
    assert EXPECTED["kaw-4.2-A11"] == pytest.approx(A11 / 1e6, rel=2e-3)
    assert EXPECTED["kaw-4.2-A12"] == pytest.approx(A12 / 1e6, rel=2e-3)
    assert EXPECTED["kaw-4.2-B11"] == pytest.approx(B11 / 1e6, rel=2e-3)
