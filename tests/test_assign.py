"""`plybridge assign`: zones from Gmsh physical tags, orientation, and section fields in the element frame."""

from __future__ import annotations

import json

import meshio
import numpy as np
import pytest

from bridge.commands.assign import sections_path
from bridge.definition.loader import parse_definition
from bridge.mesh.formats import read_mesh
from bridge.model.build import build_model
from bridge.model.fields import FIELD_NAMES, section_fields
from shells.laminate import Laminate, Ply, section_properties
from tests.common import assert_one_line_error, run_cli
from tests.meshes import mixed_plate, write_gmsh22_ascii

DEF = """
units = "N-mm"
[materials.cf]
E1 = "181 GPa"
E2 = "10.3 GPa"
G12 = "7.17 GPa"
nu12 = 0.28
G23 = "3.5 GPa"
alpha1 = "0.02e-6/degC"
alpha2 = "22.5e-6/degC"
density = "1.6 g/cm^3"
thickness = 0.125
[laminates.skin]
layup = "[0/45/-45/90]s"
material = "cf"
[laminates.unsym]
layup = "[30/-45/0]"
material = "cf"
[[zones]]
name = "tris"
laminate = "skin"
select = { tag = "gmsh:physical", values = ["block1"] }
orientation = { vector = [1, 1, 0] }
[[zones]]
name = "quads"
laminate = "unsym"
select = { tag = "gmsh:physical", values = [2] }
orientation = { vector = [0, 1, 0] }
offset = "0.2 mm"
"""


@pytest.fixture
def gmsh_file(tmp_path):
    path = tmp_path / "panel.msh"
    write_gmsh22_ascii(path, mixed_plate())
    return path


def test_assign_writes_every_field(tmp_path, gmsh_file, write_definition):
    out = tmp_path / "sections.vtu"
    proc = run_cli("assign", write_definition(DEF), gmsh_file, "-o", out)
    assert proc.returncode == 0, proc.stderr
    m = meshio.read(out)
    names = set(m.cell_data)
    assert set(FIELD_NAMES) <= names
    ncell = sum(len(c.data) for c in m.cells)
    comps = {"A": 9, "B": 9, "D": 9, "H": 3, "NT": 3, "MT": 3, "frame_x": 3, "frame_y": 3, "normal": 3}
    for name, k in comps.items():
        arr = np.concatenate(m.cell_data[name])
        assert arr.reshape(ncell, -1).shape[1] == k, name
    table = json.loads(sections_path(out).read_text())
    assert [s["laminate"] for s in table["sections"]] == ["skin", "unsym"]
    assert table["sections"][1]["offset"] == pytest.approx(0.2)


def test_section_rotation_matches_rotating_the_plies(gmsh_file, write_definition):
    # Independent check: A, B, D in the element frame equal those of the laminate whose ply angles are
    # increased by the cell's material angle φ (a ply at θ in laminate axes lies at θ + φ in the element frame).
    import tomllib
    defn = parse_definition(tomllib.loads(DEF))
    model = build_model(defn, read_mesh(gmsh_file))
    fields = section_fields(model)
    for cell in (0, model.n_cells - 1):
        sec = model.sections[model.section[cell]]
        phi = model.phi[cell]
        turned = Laminate("t", tuple(Ply(p.material, p.angle + phi, p.thickness) for p in sec.laminate.plies),
                          sec.laminate.offset)
        sp = section_properties(turned)
        for name in ("A", "B", "D"):
            ref = getattr(sp, name)
            np.testing.assert_allclose(fields[name][cell].reshape(3, 3), ref, rtol=1e-9, atol=1e-9 * np.abs(sp.A).max())
        np.testing.assert_allclose(fields["NT"][cell], sp.NT, atol=1e-12 * np.abs(sp.NT).max())
    tris = model.zone == 0
    np.testing.assert_allclose(model.phi[tris], 45.0)        # [1, 1, 0] projected on a flat plate, from x
    np.testing.assert_allclose(model.phi[~tris], 90.0)
    np.testing.assert_allclose(fields["offset"][~tris], 0.2)


@pytest.mark.parametrize("change, needle", [
    (('values = ["block1"]', 'values = ["nope"]'), "no tag named 'nope'"),
    (('values = [2]', 'values = [7]'), "no cell has gmsh:physical = 7"),
    (('tag = "gmsh:physical", values = [2]', 'tag = "gmsh:physical", values = ["block1"]'), "exactly one zone"),
    (('laminate = "unsym"', 'laminate = "unsim"'), "did you mean 'unsym'"),
    (('orientation = { vector = [0, 1, 0] }', 'orientation = { vector = [0, 0, 1] }'), "normal"),
])
def test_zone_errors(change, needle, tmp_path, gmsh_file, write_definition):
    out = tmp_path / "x.vtu"
    text = DEF.replace(*change)
    assert_one_line_error(run_cli("assign", write_definition(text), gmsh_file, "-o", out), needle)
    assert not out.exists()


def test_cells_left_without_zone(tmp_path, gmsh_file, write_definition):
    text = DEF.split("[[zones]]\nname = \"quads\"")[0]
    assert_one_line_error(run_cli("assign", write_definition(text), gmsh_file, "-o", tmp_path / "x.vtu"),
                          "in no zone")
