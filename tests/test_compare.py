"""plybridge compare: solver ply values against our recovery; every convention error planted and diagnosed.

The synthetic "solver" output is our numpy recovery of the same resultants with one error planted, either in
the inputs (a definition variant: angles negated, the 0° reference turned, the offset dropped, no temperature;
or resultants with Mxy negated) or in how the values are written (ply order, axes, points, shear convention,
component order, units). Two zones: "left" (unsymmetric five-ply stack at 45° to the element x axis) and
"right" (three plies with a reference-surface offset), so that every error changes the values.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from bridge.cli import main
from bridge.compare.run import run_compare
from bridge.definition.loader import load_definition
from bridge.mesh.formats import vtu
from bridge.model.build import build_model
from bridge.recover.run import plan_cases
from bridge.recover.resultants import resultant_arrays
from bridge.compare.solver_plies import read_solver_plies, solver_arrays
from bridge.definition.solver_plies import parse_solver_plies
from postproc.compare import element_to_material, material_to_element, reference_values
from postproc.report_compare import comparison_section
from postproc.diagnose import HYPOTHESES
from shells.errors import DefinitionError, InputError
from tests.meshes import flat_plate

CASES = ("pull", "hot")
#: A solver writing psi where we have MPa: 1 MPa = 145.0377… psi (lbf = 4.4482216152605 N, in = 25.4 mm exactly).
MPA_TO_PSI = 25.4 ** 2 / 4.4482216152605


def definition_text(left_angles=(0, 30, -45, 90, 60), left_vector=(1, 1, 0), right_offset=0.3, hot_dT=-80.0,
                    quantity="stress", extra=""):
    comps = ('["sigma1", "sigma2", "tau12", "tau13", "tau23"]' if quantity == "stress"
             else '["eps1", "eps2", "gamma12"]')
    plies = ", ".join(f"{{angle = {a}, thickness = {t}}}" for a, t in zip(left_angles, (0.2, 0.15, 0.25, 0.2, 0.3)))
    return f"""
units = "N-mm"
[materials.cf]
E1 = 140000
E2 = 9000
G12 = 4600
nu12 = 0.3
G23 = 3000
alpha1 = -0.3e-6
alpha2 = 28e-6
[laminates.five]
material = "cf"
plies = [{plies}]
[laminates.three]
material = "cf"
plies = [{{angle = 15, thickness = 0.3}}, {{angle = -60, thickness = 0.2}}, {{angle = 45, thickness = 0.25}}]
[[zones]]
name = "left"
laminate = "five"
select = {{tag = "zone_id", values = [1]}}
orientation = {{vector = {list(left_vector)}}}
[[zones]]
name = "right"
laminate = "three"
select = {{tag = "zone_id", values = [2]}}
orientation = {{vector = [1, 0, 0]}}
offset = {right_offset}
[cases.pull]
step = 1
[cases.hot]
step = 2
delta_T = {hot_dT}
[solver_plies]
pattern = "ply{{ply}}_{{point}}"
quantity = "{quantity}"
components = {comps}
{extra}
"""


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """Mesh (8 cells, two zones), resultants file and the base definition."""
    d = tmp_path_factory.mktemp("compare")
    mesh = flat_plate(4, 2)
    ids = np.where(mesh.centroids()[:, 0] < 1.0, 1, 2)
    mesh = mesh.with_cell_data({"zone_id": ids})
    vtu.write(d / "mesh.vtu", mesh, {"zone_id": ids})
    R = np.random.default_rng(5).normal(size=(2, mesh.n_cells, 8)) * np.array([80, 60, 30, 15, 12, 8, 6, 5])
    vtu.write(d / "res.vtu", mesh, {f"{k}@{c}": v for j, c in enumerate(CASES)
                                    for k, v in resultant_arrays(R[j]).items()})
    return {"dir": d, "mesh": mesh, "R": R, "left": ids == 1, "right": ids == 2}


def recovered(world, text, R=None, name="variant.toml"):
    """Our recovery under a definition text (the independent 'solver' before the writing errors)."""
    path = world["dir"] / name
    path.write_text(text, encoding="utf-8")
    defn = load_definition(path)
    model = build_model(defn, world["mesh"])
    dT = plan_cases(defn, model, CASES).delta_T(model, 0, model.n_cells)
    spec = defn.solver_plies
    vals = reference_values(model.tables(), model.section, model.phi, world["R"] if R is None else R, dT, None,
                            None, spec.quantity)
    return path, model, spec, vals


def write_solver(world, values, spec, model, name="solver.vtu"):
    arrays = {}
    for j, c in enumerate(CASES):
        arrays.update({f"{k}@{c}": v for k, v in solver_arrays(values[j], spec, model).items()})
    vtu.write(world["dir"] / name, world["mesh"], arrays)
    return world["dir"] / name


def run(world, defn_path, solver_path, *extra):
    out = CliRunner().invoke(main, ["compare", str(defn_path), str(world["dir"] / "mesh.vtu"),
                                    str(world["dir"] / "res.vtu"), str(solver_path), "-o",
                                    str(world["dir"] / "cmp.h5"), "--json", "--quiet", *extra])
    return out.exit_code, (json.loads(out.stdout) if out.exit_code in (0, 1) else out.output)


def base(world, quantity="stress"):
    return recovered(world, definition_text(quantity=quantity), name=f"base-{quantity}.toml")


def in_zone(world, zone, planted, clean):
    cells = world[zone]
    out = clean.copy()
    out[:, cells] = planted[:, cells]
    return out


# ----------------------------------------------------------------------------- clean, noise, reading

def test_clean_output_passes(world):
    path, model, spec, ours = base(world)
    code, summary = run(world, path, write_solver(world, ours, spec, model))
    assert code == 0 and summary["verdict"] == "pass" and summary["diagnosis"] == []
    assert summary["max_discrepancy"] < 1e-9 and summary["fraction_cells_within"] == 1.0


def test_an_extra_solver_case_is_named_not_silently_dropped(world):
    """The solver's file holds a third case the definition does not name: the comparison passes on the two it
    has, and says on stdout, in the summary and its note that the third was not compared."""
    path, model, spec, ours = base(world)
    arrays = {}
    for j, c in enumerate(CASES + ("thermal-soak",)):
        arrays.update({f"{k}@{c}": v for k, v in solver_arrays(ours[min(j, 1)], spec, model).items()})
    vtu.write(world["dir"] / "extra.vtu", world["mesh"], arrays)
    code, summary = run(world, path, world["dir"] / "extra.vtu")
    assert code == 0 and summary["verdict"] == "pass" and summary["cases"] == list(CASES)
    assert summary["unmatched_solver_cases"] == ["thermal-soak"] and "thermal-soak" in summary["note"]
    out = CliRunner().invoke(main, ["compare", str(path), str(world["dir"] / "mesh.vtu"), str(world["dir"] / "res.vtu"),
                                    str(world["dir"] / "extra.vtu"), "-o", str(world["dir"] / "cmp.h5"), "--quiet"])
    assert "unmatched_solver_cases\tthermal-soak\n" in out.stdout
    assert "thermal-soak" in comparison_section(summary)


def test_noise_at_1e6_passes(world):
    path, model, spec, ours = base(world)
    noisy = ours * (1 + 1e-6 * np.random.default_rng(2).standard_normal(ours.shape))
    code, summary = run(world, path, write_solver(world, noisy, spec, model))
    assert code == 0 and 1e-8 < summary["max_discrepancy"] < 1e-4


LAYOUTS = [
    'pattern = "ply{ply}_{point}"\naxes = "element"\ncomponents = ["tau_xy", "sigma_x", "sigma_y", "_", "tau_xz", '
    '"tau_yz"]',
    'pattern = "ply{ply}_{point}"\naxes = "laminate"\ncomponents = ["sigma_x", "sigma_y", "tau_xy"]',
    'pattern = "ply{ply}_{point}"\nply_order = "top-down"\nply_base = 0',
    'pattern = "ply{ply}_{point}"\npoints = { middle = "mid", top = "t" }\ncomponents = ["tau12", "sigma1", '
    '"sigma2"]',
    'pattern = "ply{ply}_{point}"\nscale = 0.001',
    'pattern = "ply{ply}_{point}"\nscale = "1 kPa"',
    'pattern = "p{ply}_{component}"\npoints = { top = "" }\ncomponents = ["sigma1", "sigma2", "tau12", "tau23", '
    '"tau13"]',
    'pattern = "p{ply}_{point}"\nquantity = "strain"\nshear = "tensor"\ncomponents = ["eps1", "eps2", "gamma12"]',
    'pattern = "p{ply}_{point}"\nquantity = "strain"\naxes = "element"\ncomponents = ["eps_x", "eps_y", '
    '"gamma_xy"]',
]


@pytest.mark.parametrize("table", LAYOUTS)
def test_every_layout_reads_back(world, table):
    text = definition_text().split("[solver_plies]")[0] + "[solver_plies]\n" + table + "\n"
    path, model, spec, ours = recovered(world, text, name="layout.toml")
    solver = write_solver(world, ours, spec, model, "layout.vtu")
    got = read_solver_plies(str(solver), model, CASES)
    given = np.ix_(range(2), range(model.n_cells), range(ours.shape[2]),
                   [int(round(loc.value * 2)) for loc in spec.locations], sorted(s for s in spec.slots if s >= 0))
    np.testing.assert_allclose(got[given], ours[given], rtol=1e-10, atol=1e-9 * np.nanmax(np.abs(ours)))
    assert np.isnan(got).sum() > np.isnan(ours).sum() or len(spec.locations) == 3


def test_frame_rotations_are_inverse_and_match_conventions():
    rng = np.random.default_rng(0)
    v, ang = rng.normal(size=(7, 5)), rng.uniform(-180, 180, 7)
    for q in ("stress", "strain"):
        np.testing.assert_allclose(material_to_element(element_to_material(v, ang, q), ang, q), v, atol=1e-12)
    # docs/conventions.md: a ply at 90° sees σx as σ2 and τxy as −τ12; (τ13, τ23) = (τyz, −τxz).
    np.testing.assert_allclose(element_to_material(np.array([1.0, 2.0, 3.0, 4.0, 5.0]), 90.0, "stress"),
                               [2.0, 1.0, -3.0, 5.0, -4.0], atol=1e-12)


@pytest.mark.parametrize("table, needle", [
    ({"pattern": "ply_{point}"}, "{ply}"), ({"axes": "sideways"}, "axes"),
    ({"components": ["sigma1", "eps2"]}, "eps2"), ({"components": ["s1", "s2"]}, "old name"),
    ({"components": ["e12"]}, "gamma12"), ({"axes": "element", "components": ["sx", "sy", "sxy"]}, "sigma_x"),
    ({"points": {"centre": "c"}}, "points"), ({"scale": -1}, "scale"), ({"patern": "x{ply}"}, "pattern"),
    ({"axes": "element", "components": ["sigma_x", "sigma_y"]}, "tau_xy"),
    ({"pattern": "p{ply}_{pt}"}, "placeholder"), ({"axes": "vectors"}, "vectors"),
    ({"axes": "global", "components": ["sigma1"]}, "tensor"),
    ({"locations": [{"array": "a", "surface": "middle"}]}, "surface"),
    ({"locations": [{"array": "a", "point": "top"}]}, "which ply"),
    ({"pattern": "p{ply}", "locations": [{"array": "a", "z": 0.1}]}, "not both"),
])
def test_bad_tables_are_refused(table, needle):
    with pytest.raises(DefinitionError, match="solver_plies") as err:
        parse_solver_plies(table)
    assert needle in str(err.value)


def test_missing_array_is_a_one_line_error(world):
    path, model, spec, ours = base(world)
    bad = world["dir"] / "bad.vtu"
    vtu.write(bad, world["mesh"], {f"ply1_bottom@{c}": np.zeros((8, 5)) for c in CASES})
    code, out = run(world, path, bad)
    assert code == 2 and "ply2_bottom" in out and "bad.vtu" in out and len(out.strip().splitlines()) == 1


# ----------------------------------------------------------------------------- every hypothesis planted

def planted(world, name):
    """(definition path, solver file) with the error ``name`` planted in the left zone (right for the offset)."""
    quantity = "strain" if name == "shear-strain-convention" else "stress"
    path, model, spec, ours = base(world, quantity)
    if name == "ply-angle-sign":
        bad = recovered(world, definition_text(left_angles=(0, -30, 45, -90, -60)))[3]
    elif name == "zero-degree-reference":
        bad = recovered(world, definition_text(left_vector=(-1, 1, 0)))[3]
    elif name == "reference-offset":
        return path, write_solver(world, in_zone(world, "right", recovered(
            world, definition_text(right_offset=0))[3], ours), spec, model)
    elif name == "thermal-residual":
        bad = recovered(world, definition_text(hot_dT=0.0))[3]
    elif name == "twisting-moment-sign":
        R = world["R"].copy()
        R[..., 5] *= -1
        bad = recovered(world, definition_text(), R=R)[3]
    elif name == "stacking-order":
        bad = ours[:, :, ::-1].copy()                       # the left zone has the most plies: all of them
    elif name == "ply-value-axes":
        from bridge.compare.solver_plies import ply_angles
        bad = material_to_element(ours, ply_angles(model)[None, :, :, None], "stress")
    elif name == "resultant-frame":
        from postproc.hypotheses import _rotate_resultants
        bad = recovered(world, definition_text(), R=_rotate_resultants(world["R"], -model.phi))[3]
    elif name == "shear-strain-convention":
        bad = ours.copy()
        bad[..., 2:] /= 2.0
    elif name == "transverse-shear-swapped":
        bad = ours[..., [0, 1, 2, 4, 3]]
    elif name == "top-bottom-swapped":
        bad = ours[:, :, :, ::-1]
    elif name == "unit-factor":
        bad = ours * MPA_TO_PSI
    else:
        raise AssertionError(name)
    return path, write_solver(world, in_zone(world, "left", bad, ours), spec, model)


@pytest.mark.parametrize("name", [h.name for h in HYPOTHESES])
def test_planted_error_fails_and_is_named_first(world, name):
    path, solver = planted(world, name)
    code, summary = run(world, path, solver)
    assert code == 1 and summary["verdict"] == "fail"
    zone = "right" if name == "reference-offset" else "left"
    assert [d["zone"] for d in summary["diagnosis"]] == [zone]      # the other zone is right
    first = summary["diagnosis"][0]["explained"][0]
    assert first["name"] == name and first["residual"] < 1e-6 and first["removed"] > 0.99
    assert first["fix"] and "{" not in first["fix"]


WRITING = {
    "stacking-order": lambda v, m: v[:, :, ::-1],
    "ply-value-axes": lambda v, m: material_to_element(v, _angles(m), "stress"),
    "top-bottom-swapped": lambda v, m: v[:, :, :, ::-1],
    "unit-factor": lambda v, m: v * MPA_TO_PSI,
    "transverse-shear-swapped": lambda v, m: v[..., [0, 1, 2, 4, 3]],
}


def _angles(model):
    from bridge.compare.solver_plies import ply_angles
    return ply_angles(model)[None, :, :, None]


def planted_pair(world, first, second):
    """Two errors in the left zone: ``first`` in the inputs or the writing, then ``second`` in the writing."""
    path, model, spec, ours = base(world)
    if first in WRITING:
        bad = WRITING[first](ours, model)
    elif first == "resultant-frame":
        from postproc.hypotheses import _rotate_resultants
        bad = recovered(world, definition_text(), R=_rotate_resultants(world["R"], -model.phi))[3]
    elif first == "ply-angle-sign":
        bad = recovered(world, definition_text(left_angles=(0, -30, 45, -90, -60)))[3]
    elif first == "twisting-moment-sign":
        R = world["R"].copy()
        R[..., 5] *= -1
        bad = recovered(world, definition_text(), R=R)[3]
    bad = WRITING[second](bad, model)
    return path, write_solver(world, in_zone(world, "left", bad, ours), spec, model)


PAIRS = [("resultant-frame", "unit-factor"), ("ply-value-axes", "stacking-order"),
         ("twisting-moment-sign", "top-bottom-swapped"), ("ply-angle-sign", "unit-factor"),
         ("resultant-frame", "stacking-order"), ("top-bottom-swapped", "transverse-shear-swapped")]


@pytest.mark.parametrize("pair", PAIRS, ids=["+".join(p) for p in PAIRS])
def test_planted_pair_is_named_first(world, pair):
    path, solver = planted_pair(world, *pair)
    code, summary = run(world, path, solver)
    assert code == 1
    d = summary["diagnosis"][0]
    top = d["explained"][0]
    assert set(top["name"].split(" + ")) == set(pair) and top["residual"] < 1e-6, d["explained"][:3]
    assert d["best"]["name"] == top["name"] and len(top["fix"].split("; ")) == 2


def test_unexplained_zone_lists_three_partial_candidates(world):
    path, model, spec, ours = base(world)
    bad = ours.copy()
    rng = np.random.default_rng(0)
    bad[:, :, :, :, :3] *= 1 + 0.5 * rng.standard_normal(bad[..., :3].shape)   # no convention error does this
    code, summary = run(world, path, write_solver(world, in_zone(world, "left", bad, ours), spec, model))
    d = summary["diagnosis"][0]
    assert d["explained"] == [] and d["best"] is None and len(d["candidates"]) == 3
    assert all(c["residual"] > 0.1 * d["discrepancy"] for c in d["candidates"])
    assert any(line.startswith("cause\tleft\tunexplained") for line in
               CliRunner().invoke(main, ["compare", str(path), str(world["dir"] / "mesh.vtu"),
                                         str(world["dir"] / "res.vtu"), str(world["dir"] / "solver.vtu"), "-o",
                                         str(world["dir"] / "cmp.h5"), "--quiet"]).stdout.splitlines())


def test_two_errors_in_two_zones(world):
    path, model, spec, ours = base(world)
    left = recovered(world, definition_text(left_angles=(0, -30, 45, -90, -60)))[3]
    right = ours * 1e3
    solver = write_solver(world, in_zone(world, "right", right, in_zone(world, "left", left, ours)), spec, model)
    code, summary = run(world, path, solver)
    assert code == 1
    named = {d["zone"]: d["explained"][0]["name"] for d in summary["diagnosis"]}
    assert named == {"left": "ply-angle-sign", "right": "unit-factor"}


def test_outputs_view_and_verdict_lines(world, tmp_path):
    path, solver = planted(world, "twisting-moment-sign")
    out = CliRunner().invoke(main, ["compare", str(path), str(world["dir"] / "mesh.vtu"), str(world["dir"] / "res.vtu"),
                                    str(solver), "-o", str(tmp_path / "c.h5"), "--view", str(tmp_path / "v.vtu")])
    assert out.exit_code == 1
    assert out.stdout.splitlines()[0] == "verdict\tfail"
    assert "coverage\t" in out.stdout and "compare (scales)" in out.stderr
    assert any(line.startswith("cause\tleft\ttwisting-moment-sign\tset [resultants] twist_sign = -1")
               for line in out.stdout.splitlines())
    view = vtu.read(tmp_path / "v.vtu")
    d = np.asarray(view.cell_data["discrepancy"]).ravel()
    assert (d[world["left"]] > 1e-3).all() and (d[world["right"]] < 1e-9).all()
    from bridge.pictures.report import read_comparison

    html = comparison_section(read_comparison(tmp_path / "c.h5"))
    assert "<section" in html and "<script" not in html.lower() and "twist" in html
    import h5py
    with h5py.File(tmp_path / "c.h5", "r") as h5:
        assert h5.attrs["format"] == "plybridge-compare"
        assert json.loads(h5.attrs["summary"])["verdict"] == "fail"


def test_map_png(world, tmp_path):
    pytest.importorskip("postproc.render")
    pytest.importorskip("pyvista")
    path, solver = planted(world, "top-bottom-swapped")
    run_compare(str(path), str(world["dir"] / "mesh.vtu"), [str(world["dir"] / "res.vtu")], [str(solver)],
                str(tmp_path / "c.h5"), map_png=str(tmp_path / "m.png"))
    assert (tmp_path / "m.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_comparison_section_escapes_every_string():
    evil = "<script>alert(1)</script>"
    summary = {"verdict": "fail", "tolerance": 1e-3, "quantity": evil, "max_discrepancy": 1.0,
               "fraction_cells_within": 0.5, "compared_values": 10, "note": evil,
               "zones": {evil: {"cells": 1, "max_discrepancy": 1.0, "within": 0.0}},
               "plies": [{"zone": evil, "ply": 1, "component": evil, "scale": 1.0, "max_abs": 1.0, "max_rel": 1.0,
                          "within": 0.0}],
               "worst_cells": [{"cell": 0, "zone": evil, "discrepancy": 1.0, "case": evil, "ply": 1, "point": evil,
                                "component": evil}],
               "diagnosis": [{"zone": evil, "discrepancy": 1.0, "best": None,
                              "explained": [{"name": evil, "explanation": evil, "fix": evil, "residual": 0.0,
                                             "removed": 1.0}]}]}
    html = comparison_section(summary)
    assert "<script" not in html and "&lt;script&gt;" in html


def test_comparison_section_shows_counts_as_integers():
    """Counts (values compared, cells, ply points, ply and cell numbers) read as integers, also when a file holds
    them as whole floats; real numbers keep their four significant figures."""
    import re

    summary = {"verdict": "pass", "tolerance": 1e-3, "max_discrepancy": 2.0e-5, "compared_values": 192,
               "zones": {"z": {"cells": 16.0, "max_discrepancy": 2.0e-5, "within": 1.0}},
               "plies": [{"zone": "z", "ply": 3.0, "component": "sigma1", "scale": 100.0, "max_abs": 1.0,
                          "max_rel": 2.0e-5, "within": 1.0}],
               "worst_cells": [{"cell": 7, "zone": "z", "discrepancy": 2.0e-5, "case": "a", "ply": 3, "point": "top",
                                "component": "sigma1"}],
               "coverage": {"text": "2 of 24 ply points", "fraction": 2 / 24,
                            "zones": {"z": {"checked": 2, "total": 24.0, "plies_checked": [1, 8]}}}}
    cells = re.findall(r'<td class="num">([^<]*)</td>', comparison_section(summary))
    for count in ("192", "16", "3", "7", "2", "24"):
        assert count in cells
    assert not {"192.0", "16.00", "3.000", "7.000", "2.000", "24.00"} & set(cells)
    assert "2.000e−05" in cells and "100.0" in cells          # the minus sign is U+2212


def test_bad_tolerance_is_input_error(world):
    path, model, spec, ours = base(world)
    with pytest.raises(InputError, match="tolerance"):
        run_compare(str(path), "m", ["r"], ["s"], "o.h5", tolerance=-1.0)


def test_reversed_element_axes_output_of_an_unsymmetric_stack(world):
    """The reversal is applied to the values as written (element axes), before any rotation into ply axes."""
    text = definition_text().replace('components = ["sigma1", "sigma2", "tau12", "tau13", "tau23"]',
                                     'axes = "element"\ncomponents = ["sigma_x", "sigma_y", "tau_xy", "tau_xz", '
                                     '"tau_yz"]')
    path, model, spec, ours = recovered(world, text, name="element-axes.toml")
    written = material_to_element(ours, _angles(model), "stress")
    planted = in_zone(world, "left", written[:, :, ::-1], written)        # angles (0, 30, -45, 90, 60): no palindrome
    arrays = {}
    for j, c in enumerate(CASES):
        for k in range(planted.shape[2]):
            for q, p in enumerate(("bottom", "middle", "top")):
                arrays[f"ply{k + 1}_{p}@{c}"] = np.nan_to_num(planted[j, :, k, q])
    vtu.write(world["dir"] / "reversed.vtu", world["mesh"], arrays)
    code, summary = run(world, path, world["dir"] / "reversed.vtu")
    assert code == 1
    assert summary["diagnosis"][0]["explained"][0]["name"] == "stacking-order"


def test_a_unit_factor_fix_that_should_be_one_reads_one():
    """[solver_plies] scale = "1 psi" on a solver that wrote MPa: the suggested scale is 1 (the product of the
    declared scale and the MPa → psi factor), not 0.9999997 from a factor rounded to 7 digits. pint (a general-
    purpose unit library) is the reference for psi in MPa and Pa."""
    import pint

    from postproc.hypotheses import UNIT_FACTORS, UnitFactor

    ureg = pint.UnitRegistry()
    factors = {what: f for f, what in UNIT_FACTORS}
    assert factors["psi → Pa"] == pytest.approx(ureg.Quantity("1 psi").to("Pa").magnitude, rel=1e-14)
    assert factors["lbf/in → N/m"] == pytest.approx(ureg.Quantity("1 lbf/in").to("N/m").magnitude, rel=1e-14)
    psi_in_mpa = ureg.Quantity("1 psi").to("MPa").magnitude
    fix = UnitFactor.fix.format(scale=psi_in_mpa / (1.0 / factors["MPa → psi"]), what="1/(MPa → psi)")
    assert fix.startswith("set [solver_plies] scale = 1 (")
