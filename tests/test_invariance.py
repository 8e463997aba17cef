"""Frame invariance of every registered criterion on every material kind it applies to.

Independent argument (no published value needed): a criterion compares a material's own stresses with its
allowables, so turning the whole problem — the layers and the load — by the same angle about the normal cannot
change any strength ratio. An isotropic layer has no axes of its own, so turning that layer alone (its stiffness
and expansion do not change) cannot change its ratios either; a check that used the layer's axes would fail here
(a 300 MPa uniaxial stress on a layer with Xt = 420, S12 = 250 gave R 1.40 at 0° and 1.67 at 45°).
Material data: Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 (from memory) for the ply; the
other values are plausible inputs, not check values.
"""

from __future__ import annotations

import numpy as np
import pytest

from postproc.recover import recover_cells
from shells import params as P
from shells.criteria import CRITERIA
from shells.laminate import Laminate, Ply
from shells.materials import Core, Isotropic, Orthotropic
from shells.ply_defaults import StrainLimits
from shells.recovery_tables import build_tables
from shells.rotation import shear_rotation, stress_rotation
from shells.section import build_section

PLY = Orthotropic("ply", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, G23=3.5e3, Xt=1500, Xc=1500, Yt=40, Yc=246,
                  S12=68, S13=68, S23=45, ilss=60, strain_limits=StrainLimits(0.008, 0.008, 0.004, 0.02, 0.01),
                  alpha1=0.02e-6, alpha2=22.5e-6, p_tpl=0.35, p_cpl=0.30).validate()
ISO = Isotropic("iso", E=70e3, nu=0.33, cte=23e-6, yield_strength=300, Xt=420, Xc=400, S12=250,
                ilss=40).validate()
CORE = Core("core", G13=40.0, G23=25.0, Ez=140.0, S13=1.2, S23=0.7, Zc=2.4, cell_size=3.2).validate()
#: A core with in-plane stiffness and strengths (an orthotropic foam or end-grain wood), under test itself.
SOLID_CORE = Core("solid core", G13=40.0, G23=25.0, Ez=140.0, E1=120.0, E2=80.0, G12=30.0, nu12=0.3, S13=1.2,
                  S23=0.7, Zc=2.4, Zt=1.9, Xt=2.5, Xc=2.2, Yt=1.6, Yc=1.5, S12=0.9, cell_size=3.2).validate()
LAYER = {P.KIND_PLY: PLY, P.KIND_ISOTROPIC: ISO, P.KIND_CORE: SOLID_CORE}

CASES = [(c, kind) for c in CRITERIA for kind in c.requires]
IDS = [f"{c.name}-{P.KIND_NAMES[k]}" for c, k in CASES]
LOAD = np.array([60.0, -35.0, 20.0, 8.0, -5.0, 3.0, 4.0, -2.5])


def _stack(kind, angles):
    """Layers under test around a core (faces for wrinkling / dimpling); a core is tested between metal faces."""
    if kind == P.KIND_CORE:
        return Laminate("s", (Ply(ISO, angles[0], 0.8), Ply(SOLID_CORE, angles[1], 6.0),
                              Ply(ISO, angles[2], 0.8))), [1]
    x = LAYER[kind]
    return Laminate("s", (Ply(x, angles[0], 0.5), Ply(CORE, angles[1], 6.0), Ply(x, angles[2], 0.5))), [0, 2]


def _rotated_load(load, beta):
    """The same physical load turned by beta about the normal, in the fixed axes (docs/conventions.md)."""
    T, Rq = stress_rotation(beta), shear_rotation(beta).T
    return np.concatenate([T @ load[:3], T @ load[3:6], Rq @ load[6:]])


def _ratios(crit, lam, load, field=None):
    tables = build_tables([build_section(lam)])
    R = np.stack([load, 0.5 * load])[:, None, :]                   # two cases: the second with a held cool-down
    shear = None if field is None else np.stack([field, 0.5 * field])[:, None]
    env, _, _ = recover_cells((crit,), tables, np.zeros(1, np.int64), np.zeros(1), R, np.array([[0.0], [-60.0]]),
                              np.zeros(2), np.array([0.0, 0.15]), np.ones(2), shear=shear)
    return env["strength_ratio"][0], env["mode"][0]


def _shear_field(lam, load):
    """(τxz, τyz) of the load's Qx, Qy through the section (nply, 3, 2), laminate axes."""
    F = build_tables([build_section(lam)]).F
    return np.einsum("kqab,b->kqa", F, load[6:])


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
@pytest.mark.parametrize("beta", [30.0, -75.0, 145.0])
def test_turning_layers_and_load_together_changes_nothing(crit, kind, beta):
    base = (15.0, 0.0, -40.0)
    lam, tested = _stack(kind, base)
    lam_t, _ = _stack(kind, tuple(a + beta for a in base))
    # The transverse shear is given as a field turned with the problem: the Q-only distribution itself depends
    # on the laminate axes for stacks not orthotropic in them (docs/criteria.md), which is not what this checks.
    field = _shear_field(lam, LOAD)
    r0, m0 = _ratios(crit, lam, LOAD, field)
    r1, m1 = _ratios(crit, lam_t, _rotated_load(LOAD, beta), field @ shear_rotation(beta))
    np.testing.assert_allclose(r1[tested], r0[tested], rtol=1e-9)
    assert np.array_equal(m1[tested], m0[tested])
    assert np.isfinite(r0[tested]).any() or crit.name in ("core-crushing",), "the check must be exercised"


@pytest.mark.parametrize("crit", [c for c in CRITERIA if P.KIND_ISOTROPIC in c.requires], ids=lambda c: c.name)
@pytest.mark.parametrize("beta", [45.0, 30.0, -110.0])
def test_turning_an_isotropic_layer_alone_changes_nothing(crit, beta):
    lam, tested = _stack(P.KIND_ISOTROPIC, (0.0, 0.0, 0.0))
    lam_t, _ = _stack(P.KIND_ISOTROPIC, (beta, 0.0, -beta))
    r0, m0 = _ratios(crit, lam, LOAD)
    r1, m1 = _ratios(crit, lam_t, LOAD)
    assert np.isfinite(r0[tested]).all()
    np.testing.assert_allclose(r1[tested], r0[tested], rtol=1e-9)
    assert np.array_equal(m1[tested], m0[tested])


@pytest.mark.parametrize("angle", [0.0, 45.0, 30.0])
def test_uniaxial_stress_on_an_isotropic_layer(angle):
    # 300 MPa uniaxial on a 1 mm isotropic layer: principal 300 (tension R = 420/300 = 1.40) and largest shear 150
    # (shear R = 250/150 = 1.67), at any layer angle; tension governs.
    lam = Laminate("m", (Ply(ISO, angle, 1.0),))
    tables = build_tables([build_section(lam)])
    from shells.criteria import by_name
    env, _, _ = recover_cells((by_name("max-stress"),), tables, np.zeros(1, np.int64), np.zeros(1),
                              np.array([[[300.0, 0, 0, 0, 0, 0, 0, 0]]]), np.zeros((1, 1)), np.zeros(1), np.zeros(1),
                              np.ones(1))
    np.testing.assert_allclose(env["strength_ratio"][0, 0], 420.0 / 300.0, rtol=1e-12)
    assert by_name("max-stress").modes[env["mode"][0, 0]] == "tension"


@pytest.mark.parametrize("crit", [c for c in CRITERIA if P.KIND_ISOTROPIC in c.requires], ids=lambda c: c.name)
def test_isotropic_layers_get_their_own_mode_names(crit):
    # An aluminium liner is never reported as failing in "matrix tension": no fibre or matrix modes on a layer
    # that has neither.
    rng = np.random.default_rng(3)
    p = ISO.params()
    p[P.WRINKLING] = p[P.DIMPLING] = 150.0
    seen = set()
    for _ in range(200):
        sm, sf = rng.normal(0, 100, 6), rng.normal(0, 20, 6)
        r, m = crit.ratio(sm, sf, p)
        if m >= 0:
            seen.add(crit.modes[m])
    assert seen and not any("fibre" in s or "matrix" in s or "13" in s or "23" in s for s in seen), seen
