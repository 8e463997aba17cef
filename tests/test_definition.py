"""Definition files: unit conversion, schema checks, and one-line errors from the CLI."""

from __future__ import annotations

import json
import numpy as np
import pytest

from bridge.definition.loader import load_definition, parse_definition
from bridge.model.sections import section_of
from shells.errors import DefinitionError, LayupError, MaterialError

from tests.common import EXAMPLE, KAW_PLY_TOML, assert_one_line_error, run_cli

BASE = """
units = "{units}"
[materials.cf]
E1 = "181 GPa"
E2 = "10.3 GPa"
G12 = "7.17 GPa"
nu12 = 0.28
alpha1 = "0.02e-6/degC"
alpha2 = "22.5e-6/degC"
thickness = "0.125 mm"
[laminates.qi]
layup = "[0/45/-45/90]s"
material = "cf"
"""


def test_same_laminate_in_three_unit_systems():
    # Unit conversion: the same laminate in N-mm, N-m and lbf-in has the same A, D and NT once converted.
    # Conversion factors: 1 lbf = 4.4482216152605 N, 1 in = 25.4 mm (exact, NIST SP 811), 1 °F = 5/9 K.
    ref = section_of(parse_definition(_doc("N-mm")), "qi").props
    m = section_of(parse_definition(_doc("N-m")), "qi").props
    close(m.A / 1e3, ref.A)            # N/m → N/mm
    close(m.D * 1e3, ref.D)            # N·m → N·mm
    close(m.NT / 1e3, ref.NT)
    imp = section_of(parse_definition(_doc("lbf-in")), "qi").props
    lbf, inch = 4.4482216152605, 25.4
    close(imp.A * lbf / inch, ref.A)
    close(imp.D * lbf * inch, ref.D)
    close(imp.NT * lbf / inch * 9 / 5, ref.NT)  # per °F → per K


def close(a, b, rtol=1e-9):
    np.testing.assert_allclose(a, b, rtol=rtol, atol=rtol * np.abs(b).max())


def _doc(units):
    import tomllib
    return tomllib.loads(BASE.format(units=units))


def test_example_loads_and_prints_json():
    proc = run_cli("section", EXAMPLE, "--json")
    assert proc.returncode == 0, proc.stderr
    out = json.loads(proc.stdout)
    assert out["units"] == "N-mm"
    skin = out["laminates"]["skin"]
    for key in ("thickness", "areal_mass", "z", "A", "B", "D", "H", "NT", "MT", "membrane", "flexural", "flags"):
        assert key in skin
    assert np.array(skin["A"]).shape == (3, 3) and np.array(skin["H"]).shape == (2, 2)
    assert len(skin["z"]) == 9 and skin["z"][0] == pytest.approx(-0.5)
    assert set(skin["membrane"]["restrained"]) >= {"Ex", "Ey", "Gxy", "nuxy"}
    assert set(skin["flexural"]) == {"restrained", "free"}
    assert skin["flags"]["quasi_isotropic"] and not out["laminates"]["unsym"]["flags"]["symmetric"]
    assert out["laminates"]["sandwich"]["thickness"] == pytest.approx(10.75)


# A plausible ply (every value inside the ranges of bridge.definition.ranges).
MAT = 'units = "N-mm"\n[materials.a]\nE1 = "100 GPa"\nE2 = "10 GPa"\nG12 = "5 GPa"\nnu12 = 0.3\n'
BAD = [
    ('units = "N-mm"\n[materials.a]\nE1=1\n', "missing key 'E2'"),
    ('units = "N-mm"\n[materials.a]\nE1 = 1\nE2 = 1\nG12 = 1\nnu12 = 0.3\nXtt = 5\n', "did you mean 'Xt'"),
    ('units = "furlongs"\nmaterials = {}\nlaminates = {}\n', "not a known unit system"),
    ('units = "N-mm"\nmaterials = 3\nlaminates = {}\n', "must be a table"),
    ('units = "N-mm"\n[materials.a]\nE1 = "1 mm"\nE2 = 1\nG12 = 1\nnu12 = 0.3\n', "wrong dimension"),
    ('units = "N-mm"\n[materials.a]\nE1 = "10 GPa"\nE2 = "100 GPa"\nG12 = "4 GPa"\nnu12 = 0.5\n'
     '[laminates.l]\nlayup="[0]"\nmaterial="a"\nthickness=1\n', "sqrt(E1/E2)"),
    ('units = "N-mm"\n[materials.a]\nE1 = "100 GPa"\nE2 = "10 GPa"\nG12 = -1\nnu12 = 0.3\n', "G12"),
    (MAT + 'thickness = -0.1\n', "thickness"),
    (MAT + 'thickness = 0.1\n'
     '[laminates.l]\nlayup = "[0/45"\nmaterial = "a"\n', "layup"),
    (MAT + 'thickness = 0.1\n'
     '[laminates.l]\nlayup = "[0/45]"\nmaterial = "b"\n', "unknown material 'b'"),
    (MAT +
     '[laminates.l]\nlayup = "[0/45]"\nmaterial = "a"\n', "no thickness"),
    ('units = "N-mm"\n[materials.a\n', "TOML syntax error"),
    (MAT + 'knockdown = 1.5\n', "knockdown"),
]


@pytest.mark.parametrize("text, needle", BAD)
def test_bad_definitions_give_one_line_and_exit_2(text, needle, write_definition, tmp_path):
    if "laminates" not in text:
        text += '\n[laminates.l]\nlayup = "[0]"\nmaterial = "a"\nthickness = 1\n'
    path = write_definition(text)
    out = tmp_path / "out.json"
    assert_one_line_error(run_cli("section", path, "-o", out), str(path), needle)
    assert not out.exists()


def test_errors_are_builtin_value_errors(write_definition):
    with pytest.raises(ValueError):
        load_definition(write_definition(BAD[0][0]))
    assert issubclass(MaterialError, DefinitionError) and issubclass(LayupError, ValueError)


def test_missing_file_is_one_line(tmp_path):
    assert_one_line_error(run_cli("section", tmp_path / "nope.toml"), "nope.toml")


def test_unknown_laminate_option_suggests(tmp_path):
    assert_one_line_error(run_cli("section", EXAMPLE, "--laminate", "skn"), "did you mean 'skin'")


def test_text_table_names_units():
    proc = run_cli("section", EXAMPLE, "--laminate", "skin", "--table")
    assert proc.returncode == 0 and "A [N/mm]" in proc.stdout and "quasi_isotropic" in proc.stdout
    assert_one_line_error(run_cli("section", EXAMPLE, "--table", "--json"), "--json or --table")


def test_default_output_is_key_tab_value_at_full_precision(write_definition):
    """The default output is for scripts: quantity<TAB>laminate<TAB>values, every number reading back to the JSON
    output's float exactly. Check value: a single 0° ply of 1 mm, A11 = Q11·t with Q11 = E1/(1 − ν12·ν21),
    A66 = G12·t (Kaw, Mechanics of Composite Materials, 2nd ed. 2006, eqs 2.93 and 4.28; Table 2.1 values)."""
    path = write_definition('units = "N-mm"\n[materials.cf]\n' + KAW_PLY_TOML + 'thickness = 1.0\n'
                            '[laminates.one]\nlayup = "[0]"\nmaterial = "cf"\n')
    proc = run_cli("section", path)
    assert proc.returncode == 0, proc.stderr
    rows = [line.split("\t") for line in proc.stdout.splitlines()]
    assert all(len(r) >= 2 for r in rows) and rows[0] == ["units", "N-mm"]
    by = {(r[0], r[1]): r[2:] for r in rows}
    assert by[("unit", "A")] == ["N/mm"] and by[("unit", "modulus")] == ["MPa"]
    A = np.array(by[("A", "one")], dtype=float).reshape(3, 3)
    nu21 = 0.28 * 10300 / 181000
    np.testing.assert_allclose([A[0, 0], A[2, 2]], [181000 / (1 - 0.28 * nu21), 7170], rtol=1e-12)
    assert by[("ply", "one")] == ["1", "cf", "0.0", "1.0", "-0.5", "0.5"]
    membrane = [r[2:] for r in rows if r[:2] == ["membrane", "one"]]
    assert [m[0] for m in membrane] == ["restrained", "free"] and all(len(m) == 6 for m in membrane)
    data = json.loads(run_cli("section", path, "--json").stdout)["laminates"]["one"]
    assert [float(v) for v in by[("D", "one")]] == [v for row in data["D"] for v in row]
