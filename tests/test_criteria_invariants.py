"""Invariants of every registered failure criterion (parametrised over CRITERIA).

These follow from the definition of the strength ratio (docs/conventions.md): R solves
criterion(sf + R·sm) = 1, so with sf = 0 it scales as 1/|load| and the state R·sm sits exactly on the
envelope. Material data: Kaw, Mechanics of Composite Materials, 2nd ed. 2006, Table 2.1 (from memory);
the other keys are filled with plausible values so every criterion is defined (the values are inputs
here, not check values).
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from shells import params as P
from shells.criteria import CRITERIA, by_name, check_requirements, code, evaluate, evaluate_block, failure_index
from shells.errors import DefinitionError, MaterialError

VALUES = {
    P.KIND_PLY: dict(E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, G13=7.17e3, G23=3.5e3, Ez=10.3e3,
                     Xt=1500.0, Xc=1500.0, Yt=40.0, Yc=246.0, S12=68.0, S13=68.0, S23=60.0, Zc=246.0,
                     strain_fibre_tension=1500 / 181e3, strain_fibre_compression=1500 / 181e3,
                     strain_matrix_tension=40 / 10.3e3, strain_matrix_compression=246 / 10.3e3,
                     strain_shear=68 / 7.17e3, S_T=60.0,
                     yield_strength=300.0, core_S13=1.0, core_S23=0.6, F12star=-0.5, p_tpl=0.35,
                     p_cpl=0.30, alpha0=np.radians(53.0), YT_is=40.0, S12_is=68.0, wrinkling=400.0,
                     dimpling=500.0, ilss=80.0),
}
VALUES[P.KIND_ISOTROPIC] = dict(VALUES[P.KIND_PLY], E1=70e3, E2=70e3, G12=26.9e3, nu12=0.3, Xt=300.0,
                                Xc=300.0, Yt=300.0, Yc=300.0, S12=170.0)
VALUES[P.KIND_CORE] = dict(VALUES[P.KIND_PLY], E1=0.0, E2=0.0, G12=0.0, G13=40.0, G23=20.0, Ez=130.0,
                           Zc=3.0)


def full(kind):
    p = np.full(P.NPARAM, np.nan)
    p[P.KIND] = kind
    for key, value in VALUES[kind].items():
        p[P.INDEX[key]] = value
    return p


FULL = {kind: full(kind) for kind in VALUES}
SCALE = {P.KIND_PLY: 30.0, P.KIND_ISOTROPIC: 100.0, P.KIND_CORE: 0.5}
RNG = np.random.default_rng(20260101)
STATES = RNG.normal(size=(24, 6))
STATES[:, 5] *= 0.2
STATES[0] = [0, 0, 1, 0, 0, 0]
STATES[1] = [-1, 0, 0, 0, 0, 0]
STATES[2] = [-1, -0.3, 0.2, 0, 0, 0]
STATES[3] = [0.1, -1, 0.4, 0.2, 0.1, -0.2]

CASES = [(c, kind) for c in CRITERIA for kind in c.requires]
IDS = [f"{c.name}-{P.KIND_NAMES[k]}" for c, k in CASES]


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
def test_zero_stress_is_safe(crit, kind):
    assert crit.ratio(np.zeros(6), np.zeros(6), FULL[kind]) == (np.inf, -1)


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
def test_scaling_and_envelope(crit, kind):
    p, zero = FULL[kind], np.zeros(6)
    for s in STATES * SCALE[kind]:
        sr, mode = crit.ratio(s, zero, p)
        assert sr > 0
        if not np.isfinite(sr):
            assert mode == -1
            continue
        assert 0 <= mode < len(crit.modes)
        for r in (0.1, 2.5):
            assert abs(crit.ratio(r * s, zero, p)[0] * r / sr - 1) < 1e-9
        # the state R·sm lies on the envelope: its own ratio is 1
        assert abs(crit.ratio(sr * s, zero, p)[0] - 1) < 1e-9


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
def test_fixed_part_reaches_envelope(crit, kind):
    p = FULL[kind]
    for s, f in zip(STATES * SCALE[kind], np.roll(STATES, 5, axis=0) * SCALE[kind] * 0.3):
        sr, mode = crit.ratio(s, f, p)
        if sr == 0:
            assert crit.ratio(f, np.zeros(6), p)[0] <= 1 + 1e-12
            continue
        if not np.isfinite(sr):
            continue
        assert abs(crit.ratio(f + sr * s, np.zeros(6), p)[0] - 1) < 1e-9


@pytest.mark.parametrize("crit", CRITERIA, ids=[c.name for c in CRITERIA])
def test_not_applicable_kinds(crit):
    for kind in set(VALUES) - set(crit.requires):
        for s in STATES:
            assert crit.ratio(s * 50, s, FULL[kind]) == (np.inf, -1)


@pytest.mark.parametrize("crit", [by_name("wrinkling"), by_name("dimpling")])
def test_optional_allowable_missing(crit):
    p = FULL[P.KIND_PLY].copy()
    p[P.WRINKLING] = p[P.DIMPLING] = np.nan
    assert crit.ratio(np.array([-100.0, 0, 0, 0, 0, 0]), np.zeros(6), p) == (np.inf, -1)


@pytest.mark.parametrize("crit", CRITERIA, ids=[c.name for c in CRITERIA])
def test_block_driver_agrees_with_pointwise(crit):
    params = np.stack([FULL[P.KIND_PLY], FULL[P.KIND_ISOTROPIC], FULL[P.KIND_CORE]])
    ncell, ncase, nply = 5, 2, 3
    rng = np.random.default_rng(7)
    sm = rng.normal(size=(ncell, ncase, nply, 3, 6)) * 30
    sf = rng.normal(size=sm.shape) * 3
    pidx = rng.integers(0, 3, size=(ncell, nply))
    pidx[1, 2] = -1
    before = (sm.copy(), sf.copy(), pidx.copy())
    sr, mode = evaluate(crit, sm, sf, pidx, params)
    for a, b in zip(before, (sm, sf, pidx)):
        assert np.array_equal(a, b)  # inputs untouched
    for c in range(ncell):
        for j in range(ncase):
            for k in range(nply):
                for q in range(3):
                    if pidx[c, k] < 0:
                        assert np.isnan(sr[c, j, k, q]) and mode[c, j, k, q] == -1
                    elif q not in crit.points:
                        assert sr[c, j, k, q] == np.inf and mode[c, j, k, q] == -1
                    else:
                        r, m = crit.ratio(sm[c, j, k, q], sf[c, j, k, q], params[pidx[c, k]])
                        assert r == sr[c, j, k, q] and m == mode[c, j, k, q]
    out_sr, out_mode = np.empty(sr.shape), np.empty(sr.shape, np.int8)
    mask = np.array([q in crit.points for q in range(3)])
    evaluate_block(code(crit.name), mask, sm, sf, pidx, params, out_sr, out_mode)
    assert np.array_equal(out_sr, sr, equal_nan=True) and np.array_equal(out_mode, mode)


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
def test_check_requirements_names_material_and_key(crit, kind):
    check_requirements([crit.name], {"full": FULL[kind]})
    for entry in crit.requires[kind]:
        p = FULL[kind].copy()
        for key in entry.split("|"):
            p[P.INDEX[key]] = np.nan
        with pytest.raises(MaterialError) as err:
            check_requirements([crit], {"mat-x": p})
        msg = str(err.value)
        assert "material 'mat-x' lacks" in msg and f"criterion '{crit.name}'" in msg
        assert "[materials.mat-x]" in msg


@pytest.mark.parametrize("crit", CRITERIA, ids=[c.name for c in CRITERIA])
def test_by_name_round_trip_and_suggestion(crit):
    assert by_name(crit.name) is crit
    typo = crit.name[:-1] + ("x" if crit.name[-1] != "x" else "y")
    with pytest.raises(DefinitionError, match=f"did you mean '{crit.name}'"):
        by_name(typo)


finite = st.one_of(st.just(0.0), st.floats(-1e4, 1e4, allow_nan=False, allow_infinity=False, width=64))
vec6 = st.lists(finite, min_size=6, max_size=6).map(np.array)


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
@settings(max_examples=60, deadline=None)
@given(sm=vec6, sf=vec6)
def test_property_ratio_non_negative_and_index_finite(crit, kind, sm, sf):
    p = FULL[kind]
    sr, mode = crit.ratio(sm, np.zeros(6), p)
    assert sr > 0 and np.isfinite(failure_index(sr))
    assert -1 <= mode < len(crit.modes)
    sr, mode = crit.ratio(sm, sf, p)
    assert sr >= 0  # also excludes NaN
    assert -1 <= mode < len(crit.modes)


@pytest.mark.parametrize("crit, kind", CASES, ids=IDS)
def test_inside_means_the_ratio_exceeds_the_load_factor(crit, kind):
    # ``inside(sm, sf, c, m, lam)`` (the ply discount leaves an evaluation out when it is True) must be True only
    # when the strength ratio exceeds lam; it must answer for the ply criteria that define it, on in-plane states
    # (σ3 = 0: Hashin's modes are convex there) as well as on general ones.
    from shells.criteria.prepared import FAST, NCONST
    from shells.criteria.state import S3

    p = FULL[kind]
    consts = np.zeros((1, NCONST))
    if crit.level != "point" or crit.prepare(p, consts[0]) != FAST:
        return
    rng = np.random.default_rng(17)
    answered = 0
    for i in range(6000):
        sm = rng.normal(size=6) * SCALE[kind] * rng.uniform(0.01, 1.0)
        sf = rng.normal(size=6) * SCALE[kind] * rng.uniform(0.0, 0.5)
        if i % 2:
            sm[S3] = sf[S3] = 0.0
        if i % 4 == 3:
            sf[:] = 0.0
        r = crit.ratio(sm, sf, p)[0]
        for lam in (0.0, 0.5 * r, 0.999 * r, r, 1.001 * r, 2.0 * r, np.inf):
            if np.isfinite(lam) and crit.inside(sm, sf, consts, 0, lam):
                answered += 1
                assert r > lam, (crit.name, sm, sf, r, lam)
    if crit.name in ("max-stress", "max-strain", "tsai-wu", "hashin") and kind == P.KIND_PLY:
        assert answered > 1000
