"""Environments per case, per-cell moisture and pressure, case kinds of the user's own, restricted envelopes, the
misalignment tolerance and progressive failure, through ``recover`` (the store, summary and metadata).

Check values are closed forms written here (classical lamination theory of a unidirectional and a cross-ply
stack of the graphite/epoxy of Kaw, Mechanics of Composite Materials, 2nd ed., 2006, Table 2.1) or runs of the
same inputs turned by hand.
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.results.store import StoreReader
from shells.errors import InputError
from tests.common import KAW_PLY_TOML, kaw_definition, recover_once, zone_cases
from tests.meshes import flat_plate

XT, YT, E1 = 1500.0, 40.0, 181e3


def _recover(tmp_path, definition: str, R: np.ndarray, mesh=None, names=None, name="o.h5"):
    return recover_once(tmp_path, definition, R, mesh, names, name)


def _nx(value: float) -> np.ndarray:
    R = np.zeros((1, 1, 8))
    R[0, 0, 0] = value
    return R


UD = kaw_definition("[0]4", "ud", material="knockdown = { environment = { hot-wet = 0.80, cold-dry = 0.95 }, "
                    "damage = 0.9 }\n") + '[[zones]]\nlaminate = "ud"\n'


def test_environment_per_case(tmp_path):
    # A unidirectional [0]4 under Nx alone: σ1 = Nx/h, σ2 = τ12 = 0 in every ply (one material, one angle), so
    # max-stress R = k·Xt·h/Nx with k the knockdown of the case's environment: 0.9·0.80, 0.9·0.95, and the
    # smallest environment factor for a case naming none. Limit cases: MS = R/1.5 − 1.
    defn = UD + """[cases.hot]
step = 1
environment = "hot-wet"
[cases.cold]
step = 1
environment = "cold-dry"
[cases.plain]
step = 1
"""
    summary, out = _recover(tmp_path, defn, _nx(300.0))
    h = 0.5
    want = {"hot": 0.72 * XT * h / 300.0, "cold": 0.855 * XT * h / 300.0, "plain": 0.72 * XT * h / 300.0}
    with StoreReader(out) as st:
        cm = st.array("cells/case_margin")[0]
        meta = st.run
    for j, name in enumerate(("hot", "cold", "plain")):
        np.testing.assert_allclose(cm[j], want[name] / 1.5 - 1.0, rtol=1e-12)
    assert [c.environment for c in meta.cases] == ["hot-wet", "cold-dry", None]
    assert [c.knockdowns[0].value for c in meta.cases] == pytest.approx([0.72, 0.855, 0.72])
    assert [(n.name, n.value) for n in meta.materials[0].environment_factors] == [("hot-wet", 0.8),
                                                                                  ("cold-dry", 0.95)]
    assert any("name no environment" in n for n in summary["notes"])


@pytest.mark.parametrize("extra, needle", [
    ('[cases.a]\nstep = 1\nenvironment = "wet"\n', "no factor for it"),
    ('[cases.a]\nstep = 1\nenvironment = "hot-wet"\n[cases.b]\nstep = 1\nenvironment = "cold-dry"\n'
     '[combinations.c]\nfactors = { a = 1.0, b = 1.0 }\n', "different environments"),
])
def test_environment_refusals(tmp_path, extra, needle):
    with pytest.raises(InputError, match=needle):
        _recover(tmp_path, UD + extra, _nx(300.0))


def test_moisture_and_pressure_fields(tmp_path):
    # Each cell of a case with a moisture field equals a case with that uniform delta_M; a pressure field on a
    # sandwich core gives core crushing R = Zc/p per cell (σ3 = −p scales with the load, nothing else loads).
    mesh = flat_plate(3, 2)
    mesh.cell_data["dM"] = np.linspace(0.0, 0.01, mesh.n_cells)
    mesh.cell_data["p"] = np.linspace(0.05, 0.5, mesh.n_cells)
    defn = f"""units = "N-mm"
[materials.cf]
{KAW_PLY_TOML}thickness = 0.125
beta1 = 0.0
beta2 = 0.4
[materials.foam]
kind = "core"
G13 = 20
G23 = 20
Zc = 1.5
[laminates.sand]
layup = "[0/90/0:foam@10/90/0]"
material = "cf"
[analysis]
criteria = ["max-stress", "core-crushing"]
factor_of_safety = {{ burst = 2.0 }}
""" + zone_cases("sand", {"wet": {"step": 1, "moisture_field": "dM"},
                          "crush": {"step": 2, "kind": "burst", "pressure_field": "p"},
                          **{f"m{k}": {"step": 1, "delta_M": float(v)} for k, v in enumerate(mesh.cell_data["dM"])}})
    R = np.zeros((2, 1, 8))
    R[0, 0, 0] = 200.0
    summary, out = _recover(tmp_path, defn, R, mesh)
    with StoreReader(out) as st:
        cm = st.array("cells/case_margin")
        meta = st.run
    for k in range(mesh.n_cells):
        np.testing.assert_allclose(cm[k, 0], cm[k, 2 + k], rtol=1e-12)
    np.testing.assert_allclose(cm[:, 1], 1.5 / mesh.cell_data["p"] / 2.0 - 1.0, rtol=1e-12)
    assert meta.cases[0].moisture_field == "dM" and meta.cases[1].pressure_field == "p"
    assert meta.cases[1].factor_of_safety == 2.0 and meta.cases[1].kind == "burst"


KINDS = "factor_of_safety = { limit = 1.5, ultimate = 1.0, proof = 1.5, burst = 2.25 }\n"
CROSS = kaw_definition("[0/90]s", "cp") + KINDS + """[analysis.envelopes.burst-fibre]
criteria = ["max-stress"]
modes = ["fibre"]
kinds = ["burst"]
""" + zone_cases("cp", {"ops": {"step": 1}, "burst": {"step": 1, "kind": "burst"}})


def _cross_ply_strains():
    """Mid-plane strains (εx, εy) per unit Nx of the intact [0/90]s (A from Kaw's Q, by hand)."""
    q11, q12, q22 = E1 / (1 - 0.28 ** 2 * 10.3 / 181), 0.28 * 10.3e3 / (1 - 0.28 ** 2 * 10.3 / 181), \
        10.3e3 / (1 - 0.28 ** 2 * 10.3 / 181)
    a11 = a22 = 0.25 * (q11 + q22)
    a12 = 0.5 * q12
    det = a11 * a22 - a12 ** 2
    return (q11, q12, q22), a22 / det, -a12 / det


def test_case_kinds_and_a_fibre_only_envelope(tmp_path):
    # [0/90]s under Nx. Full envelope: the 90° plies fail first in matrix tension, σ2 = Q12 εy + Q22 εx = Yt.
    # Fibre-only envelope of the burst case (max-stress fibre modes): the 0° plies, σ1 = Q11 εx + Q12 εy = Xt.
    # Margins with the kinds' own factors: limit 1.5, burst 2.25.
    nx = 100.0
    summary, out = _recover(tmp_path, CROSS, _nx(nx))
    (q11, q12, q22), ex, ey = _cross_ply_strains()
    r_matrix = YT / ((q12 * ey + q22 * ex) * nx)
    r_fibre = XT / ((q11 * ex + q12 * ey) * nx)
    with StoreReader(out) as st:
        cm = st.array("cells/case_margin")[0]
        fib = {k: st.array(f"envelopes/burst-fibre/{k}")[0] for k in ("min_margin", "strength_ratio", "case", "mode",
                                                                     "critical_ply")}
        meta = st.run
    np.testing.assert_allclose(cm, [r_matrix / 1.5 - 1, r_matrix / 2.25 - 1], rtol=1e-9)
    np.testing.assert_allclose(fib["strength_ratio"], r_fibre, rtol=1e-9)
    np.testing.assert_allclose(fib["min_margin"], r_fibre / 2.25 - 1, rtol=1e-9)
    assert fib["case"] == 1 and fib["critical_ply"] in (1, 4) and fib["mode"] == 0      # fibre tension
    assert summary["envelopes"]["burst-fibre"]["worst"]["mode"] == "fibre tension"
    assert meta.analysis.envelopes[0].kinds == ("burst",)
    assert dict((n.name, n.value) for n in meta.analysis.factor_of_safety)["burst"] == 2.25


@pytest.mark.parametrize("table, needle", [
    ('[analysis.envelopes.x]\ncriteria = ["tsai-wu"]\nmodes = ["fibre"]\n', "cannot be restricted"),
    ('[analysis.envelopes.x]\nmodes = ["fibre tensile"]\n', "not a mode"),
    ('[analysis.envelopes.x]\nkinds = ["brust"]\n', "not a case kind"),
])
def test_restricted_envelope_refusals(tmp_path, table, needle):
    from bridge.definition.loader import parse_definition
    import tomllib

    text = CROSS.replace("[analysis.envelopes.burst-fibre]", table + "[analysis.envelopes.burst-fibre]").replace(
        'criteria = ["max-stress"]\nfactor', 'criteria = ["max-stress", "tsai-wu"]\nfactor')
    with pytest.raises(InputError, match=needle):
        parse_definition(tomllib.loads(text))


def test_misalignment_is_the_worst_of_three_turned_runs(tmp_path):
    # The laminate turned by hand: the zone's 0° vector at −3°, 0° and +3° from global X (the element x axis of
    # this flat plate), three runs; misalignment = "3 deg" keeps the lowest margin of each ply and the turn.
    rng = np.random.default_rng(5)
    mesh = flat_plate(3, 2)
    R = rng.normal(size=(2, mesh.n_cells, 8)) * np.array([100, 60, 40, 10, 8, 4, 3, 2.0])
    qi = kaw_definition("[0/45/-45/90]s", "qi", '["max-stress", "tsai-wu", "hashin"]') + """MIS
[[zones]]
laminate = "qi"
orientation = { vector = VEC }
"""
    margins = []
    for k, turn in enumerate((0.0, -3.0, 3.0)):
        vec = f"[{float(np.cos(np.radians(turn)))!r}, {float(np.sin(np.radians(turn)))!r}, 0.0]"
        _, out = _recover(tmp_path, qi.replace("MIS", "").replace("VEC", vec), R, mesh, name=f"t{k}.h5")
        with StoreReader(out) as st:
            margins.append(st.array("envelope/margin"))
    summary, out = _recover(tmp_path, qi.replace("MIS", 'misalignment = "3 deg"').replace("VEC", "[1, 0, 0]"),
                            R, mesh, name="mis.h5")
    with StoreReader(out) as st:
        got = st.array("envelope/margin")
        turn = st.array("envelope/misalignment")
        meta = st.run
    stack = np.stack(margins)
    np.testing.assert_allclose(got, stack.min(axis=0), rtol=1e-12)
    which = np.array([0.0, -3.0, 3.0])[np.argmin(stack, axis=0)]
    np.testing.assert_array_equal(turn, which)
    assert meta.analysis.misalignment == 3.0
    assert summary["misaligned_cells"] == int(np.count_nonzero(
        turn[np.arange(mesh.n_cells), np.nanargmin(got, axis=1)]))


def test_progressive_through_recover(tmp_path):
    # The stored factors are those of the ply-discount kernel on the same inputs (tests/test_progressive.py
    # checks the kernel against an independent calculation); the zone summary gives their minima and the
    # ratio last/first, and the hot spots keep the failure sequence.
    from postproc.progressive import progressive_cells
    from shells.criteria import by_name

    defn = CROSS.replace("[analysis.envelopes.burst-fibre]", '[analysis.progressive]\nmatrix_retained = 0.1\n'
                         '[analysis.envelopes.burst-fibre]')
    summary, out = _recover(tmp_path, defn, _nx(100.0))
    with StoreReader(out) as st:
        first, last = st.array("cells/first_ply_factor"), st.array("cells/last_ply_factor")
        seq = st.array("hotspots/progressive_sequence")
        tables = st.tables()
        meta = st.run
    R = np.zeros((2, 1, 8))
    R[:, 0, 0] = 100.0
    f, g, _ = progressive_cells((by_name("max-stress"),), tables, np.zeros(1, np.int64),
                                np.zeros(1), R, np.zeros((2, 1)), retained=(0.1, 0.0))
    np.testing.assert_allclose(first, np.broadcast_to(f, first.shape), rtol=1e-12)
    np.testing.assert_allclose(last, np.broadcast_to(g, last.shape), rtol=1e-12)
    zone = summary["progressive"]["zone-1"]
    assert zone["first"] == pytest.approx(f.min())
    # With 10 % of E2 kept, the 90° plies carry Nx across their fibres without limit once the 0° plies are gone
    # (σ1 of a 90° ply is then exactly 0): the discount never ends, the last-ply factor is inf (null in JSON).
    assert np.isinf(g).all() and zone["last"] is None and zone["ratio_min"] is None
    assert np.isfinite(seq[0, 0, 0]).all() and seq.shape[-1] == 5
    assert meta.analysis.progressive.matrix_retained == 0.1
    assert meta.summary.progressive[0].zone == "zone-1"


def test_progressive_summary_ratio(tmp_path):
    # With the failed moduli set to zero (the default) the cross-ply ends when the 0° plies fail: the zone's
    # ratio last/first is that of the kernel.
    from postproc.progressive import progressive_cells
    from shells.criteria import by_name

    defn = CROSS.replace("[analysis.envelopes.burst-fibre]", "[analysis.progressive]\n[analysis.envelopes.burst-fibre]")
    summary, out = _recover(tmp_path, defn, _nx(100.0))
    with StoreReader(out) as st:
        tables = st.tables()
    f, g, _ = progressive_cells((by_name("max-stress"),), tables, np.zeros(1, np.int64), np.zeros(1), _nx(100.0),
                                np.zeros((1, 1)))
    zone = summary["progressive"]["zone-1"]
    assert zone["last"] == pytest.approx(g[0, 0]) and zone["ratio_max"] == pytest.approx(g[0, 0] / f[0, 0])


@pytest.mark.parametrize("values, needle", [(np.array([0.0, np.nan, 0.0, 0.0, 0.0, 0.0]), "not finite at cells 1"),
                                            (np.zeros((6, 2)), "one number per cell")])
def test_a_bad_field_array_is_refused(tmp_path, values, needle):
    mesh = flat_plate(3, 2)
    mesh.cell_data["dM"] = values
    defn = UD.split("[[zones]]")[0] + '[[zones]]\nlaminate = "ud"\n[cases.wet]\nstep = 1\nmoisture_field = "dM"\n'
    with pytest.raises(InputError, match=needle):
        _recover(tmp_path, defn, _nx(100.0), mesh)
