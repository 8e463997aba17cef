"""`plybridge recover` end to end: a store whose values match a hand recovery, cases, combinations, bad input."""

from __future__ import annotations

import h5py
import numpy as np
import pytest

from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import write_resultants_h5
from tests.common import KAW_PLY_TOML, assert_one_line_error, run_cli
from tests.meshes import flat_plate

DEF = """
units = "N-mm"
[materials.cf]
""" + KAW_PLY_TOML + """thickness = 1.0
[laminates.one]
layup = "[60]"
material = "cf"
[laminates.qi]
layup = "[0/45/-45/90]s"
material = "cf"
thickness = 0.125
[analysis]
criteria = ["max-stress", "tsai-wu"]
[[zones]]
name = "lamina"
laminate = "one"
select = { tag = "block", values = [0] }
[[zones]]
name = "rest"
laminate = "qi"
[cases.a]
step = 1
[cases.b]
step = 2
kind = "ultimate"
[combinations.ab]
factors = { a = 1.0, b = 0.5 }
kind = "ultimate"
"""


@pytest.fixture
def model(tmp_path):
    mesh = flat_plate(4, 3)
    n = mesh.n_cells
    tag = (np.arange(n) >= 6).astype(np.int32)          # cells 0-5: the one-ply zone
    write_mesh(tmp_path / "plate.vtu", mesh, {"block": tag})
    R = np.zeros((2, n, 8))
    R[0, :, :3] = (2.0, -3.0, 4.0)                       # Kaw's lamina state on a 1 mm ply: N = σ h
    R[1, :, :3] = (4.0, -6.0, 8.0)
    write_resultants_h5(tmp_path / "res.h5", ["a", "b"], R)
    return tmp_path


def test_store_matches_hand_recovery(model, write_definition):
    out = model / "out.h5"
    proc = run_cli("recover", write_definition(DEF), model / "plate.vtu", model / "res.h5", "-o", out,
                   "--store", "plies", "--view", model / "view.vtu")
    assert proc.returncode == 0, proc.stderr
    summary = dict(line.split("\t") for line in proc.stdout.strip().splitlines())
    with h5py.File(out) as h5:
        assert [c.decode() for c in h5["cases"][()]] == ["a", "b", "ab"]
        # Kaw (2006), ch. 2 (from memory, re-derived): material stresses (1.714, −2.714, −4.165) MPa; the max
        # stress ratio 16.33 (shear) and Tsai-Wu 22.39 give the strength ratio; margins by case kind:
        # a limit (FoS 1.5): 16.33/1.5 − 1; b ultimate at twice the load: 16.33/2 − 1; ab = a + b/2 = 2a.
        np.testing.assert_allclose(h5["plies/stress"][0, 0, 0, 1], [1.714, -2.714, -4.165], rtol=1e-3)
        cm = h5["cells/case_margin"][0]
        np.testing.assert_allclose(cm, [16.33 / 1.5 - 1, 16.33 / 2 - 1, 16.33 / 2 - 1], rtol=2e-3)
        assert h5["cells/critical_ply"][0] == 1 and h5["envelope/criterion"][0, 0] == 0   # max stress
        np.testing.assert_allclose(h5["cells/min_margin"][0], 16.33 / 2 - 1, rtol=2e-3)
        assert np.isnan(h5["envelope/strength_ratio"][0, 1])                            # past the ply count
        assert h5["envelope/strength_ratio"].shape == (12, 8)
        assert "sha256" in h5["meta/run"][()].decode() and "qualified engineer" in h5.attrs["caution"]
        assert list(h5["envelope/case"].attrs["names"]) == ["a", "b", "ab"]
        assert h5["cells/criterion"].attrs["names"][0] == "max-stress"
    assert float(summary["min_margin"]) == pytest.approx(min(16.33 / 2 - 1, 99), rel=1) and summary["units"] == "N-mm"
    assert (model / "view.vtu").exists() and (model / "out.h5.hotspots.csv").read_text().startswith("rank,cell")


def test_missing_strength_names_material_and_key(model, write_definition):
    text = DEF.replace("S12 = 68\n", "")
    out = model / "out.h5"
    assert_one_line_error(run_cli("recover", write_definition(text), model / "plate.vtu", model / "res.h5",
                                  "-o", out), "cf", "S12")
    assert not out.exists()


def test_unknown_case_source_is_one_line(model, write_definition):
    text = DEF.replace("[cases.a]\nstep = 1", '[cases.a]\nsource = "nope"')
    assert_one_line_error(run_cli("recover", write_definition(text), model / "plate.vtu", model / "res.h5",
                                  "-o", model / "o.h5"), "nope")


def test_nan_cells_are_flagged_and_reported(model, write_definition):
    R = np.zeros((2, 12, 8))
    R[:, :, 0] = 5.0
    R[1, 7, 3] = np.nan
    write_resultants_h5(model / "nan.h5", ["a", "b"], R)
    out = model / "out.h5"
    proc = run_cli("recover", write_definition(DEF), model / "plate.vtu", model / "nan.h5", "-o", out, "--quiet")
    assert proc.returncode == 0, proc.stderr
    assert "flagged_cells\t1" in proc.stdout and "warning" in proc.stderr
    with h5py.File(out) as h5:
        assert h5["cells/flagged"][()].tolist() == [i == 7 for i in range(12)]
        assert np.isfinite(h5["cells/min_margin"][7])         # case a still computed


def test_temperature_field_equals_uniform_delta_T(tmp_path, write_definition):
    # A per-cell temperature field holding the same value everywhere must give the same margins as a
    # uniform delta_T (consistency of the two inputs; residual thermal stresses held fixed in both).
    mesh = flat_plate(3, 2)
    n = mesh.n_cells
    write_mesh(tmp_path / "p.vtu", mesh, {"block": np.zeros(n, np.int32), "dT": np.full(n, -90.0)})
    R = np.zeros((1, n, 8))
    R[0, :, 1] = 15.0
    write_resultants_h5(tmp_path / "r.h5", ["a"], R)
    text = DEF.split("[cases.a]")[0] + (
        '[cases.field]\nstep = 1\ntemperature_field = "dT"\n[cases.uniform]\nstep = 1\ndelta_T = -90\n')
    text = text.replace('S12 = 68\n', 'S12 = 68\nalpha1 = "0.02e-6/degC"\nalpha2 = "22.5e-6/degC"\n')
    out = tmp_path / "o.h5"
    proc = run_cli("recover", write_definition(text), tmp_path / "p.vtu", tmp_path / "r.h5", "-o", out, "--quiet")
    assert proc.returncode == 0, proc.stderr
    with h5py.File(out) as h5:
        cm = h5["cells/case_margin"][()]
    np.testing.assert_array_equal(cm[:, 0], cm[:, 1])
    assert np.all(np.isfinite(cm))


def test_the_example_definition_recovers_without_edits(tmp_path):
    # examples/definition.toml as shipped: strain limits derived from the strengths (noted), every zone used.
    import json

    from tests.common import EXAMPLE

    mesh = flat_plate(4, 4)
    n = mesh.n_cells
    write_mesh(tmp_path / "m.vtu", mesh, {"zone": (np.arange(n) % 4 + 1).astype(np.int32)})
    rng = np.random.default_rng(5)
    R = rng.normal(size=(2, n, 8)) * np.array([20.0, 20.0, 10.0, 2.0, 2.0, 1.0, 1.0, 1.0])
    write_resultants_h5(tmp_path / "r.h5", ["p", "h"], R)
    proc = run_cli("recover", EXAMPLE, tmp_path / "m.vtu", tmp_path / "r.h5", "-o", tmp_path / "o.h5", "--json")
    assert proc.returncode == 0, proc.stderr
    summary = json.loads(proc.stdout)
    assert "derived as strength / modulus" in summary["defaults"]["cf-ud"]["max-strain"]
    assert "strain limits" in proc.stderr and summary["worst"] is not None


def test_view_writes_chosen_ply_fields(model, write_definition):
    """Per-ply cell arrays match the store: margins per ply, σ1 at the top of each ply in its governing case."""
    from bridge.mesh.formats.vtu import read as read_vtu

    out, view = model / "v.h5", model / "fields.vtu"
    proc = run_cli("recover", write_definition(DEF), model / "plate.vtu", model / "res.h5", "-o", out, "--store",
                   "plies", "--view", view, "--view-fields", "min_margin,margin,sigma1@top,gamma12")
    assert proc.returncode == 0, proc.stderr
    data = {k: np.asarray(v).ravel() for k, v in read_vtu(view).cell_data.items()}
    assert {"min_margin", "margin_ply01", "margin_ply08", "sigma1_top_ply01", "gamma12_ply08"} <= set(data)
    with h5py.File(out) as h5:
        np.testing.assert_array_equal(data["margin_ply02"], h5["envelope/margin"][:, 1])
        case = h5["envelope/case"][:, 0]
        want = h5["plies/stress"][()][case, np.arange(12), 0, 2, 0]
    np.testing.assert_allclose(data["sigma1_top_ply01"], want)
    assert_one_line_error(run_cli("recover", write_definition(DEF), model / "plate.vtu", model / "res.h5", "-o", out,
                                  "--view", view, "--view-fields", "s1"), "retired", "'sigma1'")
    assert_one_line_error(run_cli("recover", write_definition(DEF), model / "plate.vtu", model / "res.h5", "-o",
                                  model / "w.h5", "--view", view, "--view-fields", "sigma1"), "--store plies")
