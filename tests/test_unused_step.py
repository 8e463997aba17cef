"""`recover` and `compare` read resultants through one source and combine cases the same way.

A NaN in an input step that no case uses must change neither command's result: a case is the sum of the
steps it uses only (``combine_steps``), never a product with a zero weight (0 · NaN = NaN).
"""

from __future__ import annotations

import json

import h5py
import numpy as np
import pytest
from click.testing import CliRunner

from bridge.cli import main
from bridge.compare.solver_plies import solver_arrays
from bridge.definition.cases import combine_steps
from bridge.definition.loader import load_definition
from bridge.mesh.formats import vtu
from bridge.model.build import build_model
from bridge.recover.resultants import ResultantSource
from bridge.recover.run import plan_cases
from bridge.recover.writers import resultant_arrays, write_resultants_h5
from postproc.compare import reference_values
from tests.meshes import flat_plate

DEF = """
units = "N-mm"
[materials.cf]
E1 = "140 GPa"
E2 = "9 GPa"
nu12 = 0.3
G12 = "4.6 GPa"
Xt = 1500
Xc = 1200
Yt = 40
Yc = 200
S12 = 70
[laminates.four]
material = "cf"
layup = "[0/45/-45/90]"
thickness = 0.25
[[zones]]
name = "all"
laminate = "four"
[analysis]
criteria = ["max-stress", "tsai-wu"]
[cases.a]
step = 1
[cases.b]
step = 2
[combinations.ab]
factors = { a = 1.0, b = -0.5 }
[solver_plies]
pattern = "ply{ply}_{point}"
"""


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    d = tmp_path_factory.mktemp("unused")
    mesh = flat_plate(3, 2)
    vtu.write(d / "mesh.vtu", mesh)
    (d / "def.toml").write_text(DEF, encoding="utf-8")
    R = np.random.default_rng(3).normal(size=(3, mesh.n_cells, 8)) * np.array([50, 40, 20, 9, 8, 5, 4, 3])
    bad = R.copy()
    bad[2, ::2] = np.nan                                  # step 3 is used by no case
    steps = ("s1", "s2", "s3")
    write_resultants_h5(d / "clean.h5", steps, R)
    write_resultants_h5(d / "nan.h5", steps, bad)
    for name, values in (("clean", R), ("nan", bad)):
        vtu.write(d / f"{name}.vtu", mesh, {f"{k}@{c}": v for j, c in enumerate(steps)
                                            for k, v in resultant_arrays(values[j]).items()})
    defn = load_definition(d / "def.toml")
    model = build_model(defn, mesh)
    plan = plan_cases(defn, model, steps)
    ours = reference_values(model.tables(), model.section, model.phi, combine_steps(plan.weights, R),
                            plan.delta_T(model, 0, model.n_cells), None, None, "stress")
    arrays = {}
    for j, c in enumerate(plan.names):
        arrays.update({f"{k}@{c}": v for k, v in solver_arrays(ours[j], defn.solver_plies, model).items()})
    vtu.write(d / "solver.vtu", mesh, arrays)
    return d, model


@pytest.mark.parametrize("kind", ["h5", "vtu"])
def test_source_reads_every_kind_the_same(inputs, kind):
    d, model = inputs
    clean = ResultantSource.of_model([str(d / f"clean.{kind}")], model)
    assert clean.names == ("s1", "s2", "s3")
    assert (clean.reader is not None) == (kind == "h5")
    h5 = ResultantSource.of_model([str(d / "clean.h5")], model)
    np.testing.assert_array_equal(clean.read(0, model.n_cells), h5.read(0, model.n_cells))
    np.testing.assert_array_equal(clean.read_cells(np.array([1, 4])), h5.read_cells(np.array([1, 4])))


@pytest.mark.parametrize("kind", ["h5", "vtu"])
def test_nan_in_an_unused_step_changes_neither_command(inputs, kind):
    d, _ = inputs
    runs = {}
    for name in ("clean", "nan"):
        res = str(d / f"{name}.{kind}")
        out = CliRunner().invoke(main, ["recover", str(d / "def.toml"), str(d / "mesh.vtu"), res, "-o",
                                        str(d / f"{name}-{kind}.h5"), "--json", "--quiet"])
        assert out.exit_code == 0, out.output
        rec = json.loads(out.stdout)
        out = CliRunner().invoke(main, ["compare", str(d / "def.toml"), str(d / "mesh.vtu"), res,
                                        str(d / "solver.vtu"), "-o", str(d / f"{name}-{kind}-cmp.h5"), "--json"])
        assert out.exit_code == 0, out.output
        runs[name] = (rec, json.loads(out.stdout))
        with h5py.File(d / f"{name}-{kind}.h5", "r") as h5:
            runs[name] += (h5["envelope/margin"][()],)
    (rec_c, cmp_c, env_c), (rec_n, cmp_n, env_n) = runs["clean"], runs["nan"]
    assert rec_n["flagged_cells"] == 0 and rec_n["worst"] == rec_c["worst"]
    np.testing.assert_array_equal(env_n, env_c)
    assert cmp_n["verdict"] == cmp_c["verdict"] == "pass"
    assert cmp_n["compared_values"] == cmp_c["compared_values"] > 0
    assert cmp_n["max_discrepancy"] == cmp_c["max_discrepancy"]
