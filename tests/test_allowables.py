"""Allowables: knockdowns act on the strengths and strain limits, and the defaults an analyst would accept.

Material data: Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 graphite/epoxy (from memory;
re-derived values below are computed in the tests).
"""

from __future__ import annotations

import numpy as np
import pytest

from postproc.recover import recover_cells
from shells import params as P
from shells.criteria import by_name
from shells.laminate import Laminate, Ply
from shells.materials import Orthotropic
from shells.recovery_tables import build_tables
from shells.section import build_section

KAW = dict(E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500.0, Xc=1500.0, Yt=40.0, Yc=246.0, S12=68.0,
           alpha1=0.02e-6, alpha2=22.5e-6)


def _cross_ply_states(m: Orthotropic, t: float, dT: float, N: np.ndarray):
    """Independent hand calculation for the symmetric cross-ply [0/90]s (equal plies, in-plane load only).

    Q̄ of the 90° ply is Q with 1 and 2 swapped; A = 2t(Q0 + Q90); the thermal force per unit ΔT is
    N_T = 2t(Q0 α0 + Q90 α90); mid-plane strain ε = A⁻¹(N + N_T ΔT) (no curvature: B = 0). The 0° ply's material
    axes are the laminate axes, so its stresses are Q0(ε − α0 ΔT), split into the mechanical part Q0 A⁻¹ N and
    the fixed (thermal) part.
    """
    nu21 = m.nu12 * m.E2 / m.E1
    d = 1 - m.nu12 * nu21
    Q0 = np.array([[m.E1 / d, m.nu12 * m.E2 / d, 0], [m.nu12 * m.E2 / d, m.E2 / d, 0], [0, 0, m.G12]])
    Q90 = Q0[[1, 0, 2]][:, [1, 0, 2]]
    a0 = np.array([m.alpha1, m.alpha2, 0.0])
    a90 = a0[[1, 0, 2]]
    A = 2 * t * (Q0 + Q90)
    NT = 2 * t * (Q0 @ a0 + Q90 @ a90)
    mech = Q0 @ np.linalg.solve(A, N)
    fixed = Q0 @ (np.linalg.solve(A, NT * dT) - a0 * dT)
    return mech, fixed


def _recover_cross_ply(m, t, dT, N, criterion, fos=1.0):
    lam = Laminate("cp", (Ply(m, 0, t), Ply(m, 90, t), Ply(m, 90, t), Ply(m, 0, t)))
    tables = build_tables([build_section(lam)])
    R = np.concatenate([N, np.zeros(5)])[None, None]
    env, _, _ = recover_cells((by_name(criterion),), tables, np.array([0]), np.array([0.0]), R, np.array([[dT]]),
                              np.zeros(1), np.zeros(1), np.array([fos]))
    return env


def _tsai_wu_ratio(mech, fixed, Xt, Xc, Yt, Yc, S, f12star=-0.5):
    """Smallest positive root of F(fixed + R·mech) = 1 (Tsai & Wu, J. Compos. Mater. 5 (1971) 58)."""
    F1, F2 = 1 / Xt - 1 / Xc, 1 / Yt - 1 / Yc
    F11, F22, F66 = 1 / (Xt * Xc), 1 / (Yt * Yc), 1 / S ** 2
    F12 = f12star * np.sqrt(F11 * F22)

    def poly(s):
        return F1 * s[0] + F2 * s[1] + F11 * s[0] ** 2 + F22 * s[1] ** 2 + F66 * s[2] ** 2 + 2 * F12 * s[0] * s[1]

    c = poly(fixed) - 1
    # quadratic in R: fit through three exact evaluations
    v1, v2 = poly(fixed + mech) - 1, poly(fixed + 2 * mech) - 1
    a = (v2 - 2 * v1 + c) / 2
    b = v1 - c - a
    roots = np.roots([a, b, c])
    return min(r.real for r in roots if abs(r.imag) < 1e-12 and r.real > 0)


@pytest.mark.parametrize("criterion", ["max-stress", "tsai-wu"])
def test_knockdown_acts_on_allowables_with_held_thermal_stress(criterion):
    # Kaw graphite/epoxy [0/90]s cooled by 100 °C and loaded by Ny = 30 N/mm; knockdown k = 0.8. The allowables
    # are k·(Xt, Xc, Yt, Yc, S12), the thermal stress is held, and R solves criterion(σ_T + R·σ_N; k·X) = 1.
    # Scaling R by k instead would be unconservative when the held part uses up strength (docs/conventions.md).
    k, t, dT, N = 0.8, 0.125, -100.0, np.array([0.0, 30.0, 0.0])
    m = Orthotropic("kaw", knockdown=k, **KAW).validate()
    mech, fixed = _cross_ply_states(m, t, dT, N)
    if criterion == "max-stress":            # matrix tension of the 0° ply governs: (k·Yt − σ2_T)/σ2_N
        expected = (k * 40.0 - fixed[1]) / mech[1]
        unknocked = (40.0 - fixed[1]) / mech[1]
    else:
        expected = _tsai_wu_ratio(mech, fixed, *(k * np.array([1500.0, 1500.0, 40.0, 246.0, 68.0])))
        unknocked = _tsai_wu_ratio(mech, fixed, 1500.0, 1500.0, 40.0, 246.0, 68.0)
    env = _recover_cross_ply(m, t, dT, N, criterion, fos=1.5)
    np.testing.assert_allclose(env["strength_ratio"][0, 0], expected, rtol=1e-9)
    np.testing.assert_allclose(env["margin"][0, 0], expected / 1.5 - 1.0, rtol=1e-9)
    assert expected < k * unknocked          # the old rule R·k was unconservative here


def test_knockdown_without_held_part_equals_scaling_the_ratio():
    # With nothing held, every criterion here is homogeneous in the allowables, so R(k·X) = k·R(X).
    m1 = Orthotropic("a", **KAW).validate()
    m2 = Orthotropic("a", knockdown=0.7, **KAW).validate()
    for crit in ("max-stress", "tsai-wu", "hashin", "tsai-hill", "hoffman"):
        e1 = _recover_cross_ply(m1, 0.125, 0.0, np.array([40.0, -25.0, 12.0]), crit)
        e2 = _recover_cross_ply(m2, 0.125, 0.0, np.array([40.0, -25.0, 12.0]), crit)
        np.testing.assert_allclose(e2["strength_ratio"], 0.7 * e1["strength_ratio"], rtol=1e-12)


def test_knocked_down_touches_allowables_only():
    p = Orthotropic("a", knockdown=0.5, **KAW).validate().params()
    q = P.knocked_down(p, 0.5)
    for i, name in enumerate(P.NAMES):
        if np.isnan(p[i]):
            assert np.isnan(q[i])
        elif i in P.ALLOWABLES:
            assert q[i] == 0.5 * p[i], name
        else:
            assert q[i] == p[i], name
