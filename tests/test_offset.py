"""Reference-surface offset: one precedence rule (zone offset, else laminate offset, else 0) for every command.

Independent derivations written here:
- moving the reference surface by e along the normal (mid-plane at z = e) gives, by the parallel-axis rule
  of classical lamination, A' = A, B' = B_mid + e·A, D' = D_mid + 2e·B_mid + e²·A (common practice);
- the resultants about the reference surface relate to those about the mid-plane by statics:
  N_mid = N, M_mid = ∫σ (z − e) dz = M − e·N;
- a homogeneous stack (one material, one angle) carries σx = Nx/h + 12·Mx_mid·ζ/h³ exactly (beam formula,
  ζ from the mid-plane).
"""

from __future__ import annotations

import tomllib

import h5py
import numpy as np
import pytest

from bridge.definition.loader import parse_definition
from bridge.mesh.formats import write_mesh
from bridge.model.build import build_model
from bridge.model.fields import section_fields
from bridge.recover.resultants import write_resultants_h5
from bridge.recover.run import run_recover
from shells.laminate import Laminate, Ply, section_properties
from shells.recovery_reference import ply_states
from shells.recovery_tables import build_tables
from shells.section import build_section
from tests.common import KAW_PLY_TOML
from tests.meshes import flat_plate

T = 0.125
H = 4 * T
DEF = """
units = "N-mm"
[materials.cf]
""" + KAW_PLY_TOML + """thickness = 0.125
[laminates.cross]
layup = "[0/90]s"
material = "cf"
offset = "-0.25 mm"
[laminates.ud]
layup = "[0]4"
material = "cf"
offset = -0.25
[analysis]
criteria = ["max-stress"]
""" + "".join(f'[[zones]]\nname = "{name}"\nlaminate = "{lam}"\n{rule}\n' for name, lam, rule in (
    ("cross-ply", "cross", 'select = { tag = "block", values = [0] }'),
    ("unidirectional", "ud", 'select = { tag = "block", values = [1] }'),
    ("cross-ply-zone-offset", "cross", "offset = 0")))


def _model():
    mesh = flat_plate(3, 2)
    block = np.array([0, 0, 1, 1, 2, 2], dtype=np.int32)
    mesh = mesh.with_cell_data({"block": block})
    return mesh, build_model(parse_definition(tomllib.loads(DEF)), mesh)


def test_laminate_offset_reaches_the_section_fields():
    _, model = _model()
    f = section_fields(model)
    e = -H / 2
    mid = section_properties(Laminate("m", tuple(Ply(model.sections[0].laminate.plies[k].material, a, T)
                                                 for k, a in enumerate((0, 90, 90, 0)))))
    # Cross-ply cells (material angle 0): B = e·A (symmetric stack, B_mid = 0), D = D_mid + e²·A.
    for c in (0, 1):
        assert f["offset"][c] == pytest.approx(e)
        np.testing.assert_allclose(f["B"][c].reshape(3, 3), e * mid.A, rtol=1e-12, atol=1e-9 * np.abs(mid.A).max())
        np.testing.assert_allclose(f["D"][c].reshape(3, 3), mid.D + e * e * mid.A, rtol=1e-12)
    # The zone's own offset = 0 wins over the laminate's.
    for c in (4, 5):
        assert f["offset"][c] == 0.0
        np.testing.assert_allclose(f["B"][c], 0.0, atol=1e-9 * np.abs(mid.A).max())
    assert model.section_names == ("cross", "ud", "cross@0")


def test_section_command_and_model_agree():
    from bridge.model.sections import build_sections

    defn = parse_definition(tomllib.loads(DEF))
    sec = build_sections(defn, ["cross"])["cross"]
    _, model = _model()
    np.testing.assert_allclose(sec.props.B, model.sections[0].props.B)


@pytest.fixture(scope="module")
def recovered(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("offset")
    mesh, _ = _model()
    write_mesh(tmp / "plate.vtu", mesh, {"block": np.asarray(mesh.cell_data["block"])})
    (tmp / "def.toml").write_text(DEF)
    R = np.zeros((1, mesh.n_cells, 8))
    R[0, :, 0] = 100.0                       # Nx = 100 N/mm on the reference surface, no moment about it
    R[0, :, 1] = -20.0
    R[0, :, 3] = 5.0                         # and Mx = 5 N·mm/mm about it
    write_resultants_h5(tmp / "res.h5", ["a"], R)
    run_recover(str(tmp / "def.toml"), str(tmp / "plate.vtu"), [str(tmp / "res.h5")], str(tmp / "out.h5"),
                store_plies=True)
    with h5py.File(tmp / "out.h5") as h5:
        return R[0, 0], h5["plies/stress"][0]


def test_plies_equal_the_mid_plane_laminate_under_moved_moment(recovered):
    r, stress = recovered
    e = -H / 2
    cf = build_section(Laminate("c", tuple(Ply(_model()[1].sections[0].laminate.plies[0].material, a, T)
                                           for a in (0, 90, 90, 0))))
    moved = r.copy()
    moved[3:6] = r[3:6] - e * r[0:3]         # M_mid = M − e·N (statics)
    ref = ply_states(build_tables([cf]), np.zeros(1, int), np.zeros(1), moved[None, None], np.zeros((1, 1)))
    np.testing.assert_allclose(stress[0], ref["stress"][0, 0], rtol=1e-9, atol=1e-9)
    # The zone with offset 0 sees the resultants about its own mid-plane.
    plain = ply_states(build_tables([cf]), np.zeros(1, int), np.zeros(1), r[None, None], np.zeros((1, 1)))
    np.testing.assert_allclose(stress[4], plain["stress"][0, 0], rtol=1e-9, atol=1e-9)


def test_homogeneous_stack_beam_formula(recovered):
    r, stress = recovered
    nx, mx = r[0], r[3]
    e = -H / 2
    m_mid = mx - e * nx
    # σ1 of a [0]4 stack under Nx, Ny, Mx: homogeneous, so σx = Nx/h + 12 M_mid ζ / h³ exactly.
    zeta = np.array([-H / 2, H / 2])
    expected = nx / H + 12.0 * m_mid * zeta / H ** 3
    got = [stress[2, 0, 0, 0], stress[2, 3, 2, 0]]
    np.testing.assert_allclose(got, expected, rtol=1e-9)
    # Nx = 100 N/mm, Mx = 5 N about the top face of a 0.5 mm stack: M_mid = 30 N, −520 MPa at the bottom and
    # +920 MPa at the top (ignoring the offset would give +80 and +320).
    np.testing.assert_allclose(expected, [-520.0, 920.0], rtol=1e-12)
