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
from shells.ply_defaults import StrainLimits
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


# ---------------------------------------------------------------- defaults an analyst would accept

def test_strain_limits_default_to_strength_over_modulus():
    # Common practice for a linear lamina: each strain limit not given is the strength over the modulus.
    m = Orthotropic("kaw", **KAW).validate()
    p = m.params()
    for key, want in (("strain_fibre_tension", 1500 / 181e3), ("strain_fibre_compression", 1500 / 181e3),
                      ("strain_matrix_tension", 40 / 10.3e3), ("strain_matrix_compression", 246 / 10.3e3),
                      ("strain_shear", 68 / 7.17e3)):
        assert p[P.INDEX[key]] == pytest.approx(want, rel=1e-15)
    assert "derived as strength / modulus" in m.defaults_used()["max-strain"]
    # Uniaxial fibre-direction stress: ε1 = σ1/E1 reaches Xt/E1 at σ1 = Xt, so max strain agrees with max stress.
    r, mode = by_name("max-strain").ratio(np.array([100.0, 0, 0, 0, 0, 0]), np.zeros(6), p)
    assert r == pytest.approx(15.0, rel=1e-12) and by_name("max-strain").modes[mode] == "fibre tension"
    # A limit given is kept; only the others are derived.
    given = Orthotropic("kaw", strain_limits=StrainLimits(matrix_tension=0.002), **KAW).validate()
    assert given.params()[P.STRAIN_MT] == 0.002 and given.strain_limit_values()[1] == (
        "fibre_tension", "fibre_compression", "matrix_compression", "shear")


def test_old_strain_keys_are_refused_with_a_pointer(write_definition):
    from bridge.definition.loader import load_definition
    from shells.errors import DefinitionError

    text = ('units = "N-mm"\n[laminates.l]\nlayup = "[0]"\nmaterial = "a"\nthickness = 1\n'
            '[materials.a]\nE1 = 100000\nE2 = 10000\nG12 = 5000\nnu12 = 0.3\ne1t = 0.01\n')
    with pytest.raises(DefinitionError) as err:
        load_definition(write_definition(text))
    msg = str(err.value)
    assert "'e1t'" in msg and "strain_limits = { fibre_tension" in msg and "\n" not in msg
    text = text.replace("e1t = 0.01\n", "strain_limits = { fibre_tension = 0.01, shear = 0.02 }\n")
    mat = load_definition(write_definition(text)).materials["a"]
    assert mat.strain_limits == StrainLimits(fibre_tension=0.01, shear=0.02)
    with pytest.raises(DefinitionError, match="fibre_tensile"):
        load_definition(write_definition(text.replace("fibre_tension", "fibre_tensile")))


@pytest.mark.parametrize("fibre, want", [("carbon", (0.35, 0.30)), ("glass", (0.30, 0.25)), (None, (0.30, 0.25))])
def test_puck_inclinations_by_fibre_family(fibre, want):
    # Puck, Kopp & Knops, Compos. Sci. Tech. 62 (2002) 371 (from memory): carbon p⊥∥⁺ 0.35, p⊥∥⁻ 0.30; glass
    # 0.30, 0.25. No family given: the glass values, with a note in the run.
    m = Orthotropic("m", fibre=fibre, **KAW).validate()
    p = m.params()
    assert (p[P.P_TPL], p[P.P_CPL]) == want
    note = m.defaults_used()["puck"]
    assert (fibre or "no fibre given") in note
    explicit = Orthotropic("m", fibre="carbon", p_tpl=0.27, p_cpl=0.22, **KAW).validate()
    assert (explicit.params()[P.P_TPL], explicit.params()[P.P_CPL]) == (0.27, 0.22)
    assert "puck" not in explicit.defaults_used()


def test_unknown_fibre_family_is_refused():
    from shells.errors import MaterialError

    with pytest.raises(MaterialError, match="carbon or glass"):
        Orthotropic("m", fibre="basalt", **KAW).validate()


def _insitu_expected(m, t, where):
    """In-situ (Yt_is, S12_is) after Camanho et al., Composites Part A 37 (2006) 165, linear shear, written out.

    Λ22⁰ = 2(1/E2 − ν21²/E1). Thick embedded: 1.12·√2·Yt, √2·S12. Thin embedded: sqrt(8 G_Ic/(π t Λ22⁰)),
    sqrt(8 G12 G_IIc/(π t)). Thin outer: 1.79·sqrt(G_Ic/(π t Λ22⁰)), sqrt(4 G12 G_IIc/(π t)) (from memory).
    An embedded ply takes the larger of thick and thin; an outer ply the larger of thin-outer and the UD value.
    """
    nu21 = m.nu12 * m.E2 / m.E1
    lam = 2 * (1 / m.E2 - nu21 ** 2 / m.E1)
    if where == "outer":
        return (max(m.Yt, 1.79 * np.sqrt(m.G_Ic / (np.pi * t * lam))),
                max(m.S12, np.sqrt(4 * m.G12 * m.G_IIc / (np.pi * t))))
    return (max(1.12 * np.sqrt(2) * m.Yt, np.sqrt(8 * m.G_Ic / (np.pi * t * lam))),
            max(np.sqrt(2) * m.S12, np.sqrt(8 * m.G12 * m.G_IIc / (np.pi * t))))


def test_larc03_insitu_strengths_by_ply_position():
    # Toughness values typical of carbon/epoxy (illustrative inputs): G_Ic 0.26, G_IIc 0.8 N/mm.
    m = Orthotropic("cf", insitu=True, G_Ic=0.26, G_IIc=0.8, **KAW).validate()
    t = 0.125
    # [0/90/90/0/(45)16]: outer thin 0° ply, embedded thin 90° cluster (2 plies act as one of 0.25 mm), embedded
    # 0° ply, and a thick outer cluster of sixteen 45° plies (2 mm).
    angles = [0, 90, 90, 0] + [45] * 16
    sec = build_section(Laminate("l", tuple(Ply(m, a, t) for a in angles)))
    p = sec.ply_params
    checks = {0: (t, "outer"), 1: (2 * t, "embedded"), 2: (2 * t, "embedded"), 3: (t, "embedded"),
              4: (16 * t, "outer"), 19: (16 * t, "outer")}
    for k, (tk, where) in checks.items():
        np.testing.assert_allclose(p[k, [P.YT_IS, P.S12_IS]], _insitu_expected(m, tk, where), rtol=1e-12)
    assert p[1, P.YT_IS] > 1.12 * np.sqrt(2) * 40                        # thin embedded beats the thick value
    assert p[4, P.YT_IS] == 40.0                                          # thick outer: the UD strength
    # A thick embedded ply: the thick-ply values.
    thick = build_section(Laminate("k", tuple(Ply(m, a, t) for a in [0] + [90] * 32 + [0]))).ply_params
    np.testing.assert_allclose(thick[10, [P.YT_IS, P.S12_IS]], (1.12 * np.sqrt(2) * 40, np.sqrt(2) * 68),
                               rtol=1e-12)
    # LaRC03 matrix tension under pure σ2: (σ2/Y_T)² = 1, so R = Y_T/σ2 with the ply's own in-situ strength.
    r, mode = by_name("larc03").ratio(np.array([0, 10.0, 0, 0, 0, 0]), np.zeros(6), p[1])
    assert r == pytest.approx(p[1, P.YT_IS] / 10.0, rel=1e-12) and mode == 2


def test_insitu_without_toughness_is_conservative():
    m = Orthotropic("cf", insitu=True, **KAW).validate()
    p = build_section(Laminate("l", tuple(Ply(m, a, 0.125) for a in (0, 90, 90, 0)))).ply_params
    np.testing.assert_allclose(p[0, [P.YT_IS, P.S12_IS]], (40.0, 68.0))                    # outer: UD strengths
    np.testing.assert_allclose(p[1, [P.YT_IS, P.S12_IS]], (1.12 * np.sqrt(2) * 40, np.sqrt(2) * 68))
    assert "G_Ic" in m.defaults_used()["larc03"]
