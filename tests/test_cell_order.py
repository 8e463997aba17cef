"""Resultants in another cell order than the mesh: mapped by connectivity or centroids, or refused.

The check values are independent of plybridge's mechanics: a file holding the same cells in another order must
give exactly the results of the file in the mesh's order (the permutation is known in the test).
"""

from __future__ import annotations

import h5py
import numpy as np
import pytest

from bridge.mesh.formats import write_mesh
from bridge.mesh.shell import ShellMesh
from bridge.recover.cell_order import ASSUMED_NOTE, match_cells
from bridge.recover.resultants import read_resultants, write_resultants_h5, write_resultants_xdmf
from shells.errors import ResultantsError
from tests.common import KAW_PLY_TOML, assert_one_line_error, run_cli
from tests.meshes import flat_plate, mixed_plate

DEF = """
units = "N-mm"
[materials.cf]
""" + KAW_PLY_TOML + """thickness = 0.125
[laminates.qi]
layup = "[0/45/-45/90]s"
material = "cf"
[analysis]
criteria = ["max-stress"]
[[zones]]
laminate = "qi"
"""


def _swapped(mesh: ShellMesh) -> tuple[ShellMesh, np.ndarray]:
    """The same cells with the blocks in the other order (triangles first); perm: file cell of each mesh cell."""
    (ta, ca), (tb, cb) = mesh.blocks
    other = ShellMesh(mesh.points, ((tb, cb), (ta, ca)))
    perm = np.concatenate([np.arange(len(ca)) + len(cb), np.arange(len(cb))])
    return other, perm


def _resultants(n: int) -> np.ndarray:
    rng = np.random.default_rng(7)
    R = rng.normal(size=(2, n, 8)) * np.array([50, 30, 10, 20, 10, 5, 5, 5.0])
    R[:, 3] *= 8.0                           # one cell clearly worst
    return R


def test_triangles_before_quads_are_mapped_by_connectivity():
    mesh = mixed_plate()
    other, perm = _swapped(mesh)
    order = match_cells(mesh, other)
    np.testing.assert_array_equal(order.perm, perm)
    assert "connectivity" in order.note


def test_renumbered_nodes_are_mapped_by_centroids():
    mesh = mixed_plate()
    rng = np.random.default_rng(3)
    new = rng.permutation(len(mesh.points))          # point k of the mesh is point new[k] of the file
    pts = np.empty_like(mesh.points)
    pts[new] = mesh.points
    cells = [(t, new[row]) for t, c in mesh.blocks for row in np.asarray(c)]      # mesh cell k, renumbered
    order = rng.permutation(len(cells))
    tris = [k for k in order if cells[k][0] == "triangle"]
    quads = [k for k in order if cells[k][0] == "quad"]
    other = ShellMesh(pts, (("triangle", np.array([cells[k][1] for k in tris])),
                            ("quad", np.array([cells[k][1] for k in quads]))))
    want = np.empty(mesh.n_cells, dtype=np.int64)
    want[np.array(tris + quads)] = np.arange(mesh.n_cells)     # file cell of each mesh cell
    got = match_cells(mesh, other)
    np.testing.assert_array_equal(got.perm, want)
    assert "centroids" in got.note


def test_other_meshes_and_reversed_cells_are_refused():
    mesh = flat_plate(3, 2)
    shifted = ShellMesh(mesh.points + [0.1, 0.0, 0.0], mesh.blocks)
    with pytest.raises(ResultantsError, match="do not match the mesh"):
        match_cells(mesh, shifted)
    quads = np.asarray(mesh.blocks[0][1]).copy()
    quads[2] = quads[2, ::-1]                         # one cell with the opposite corner order
    with pytest.raises(ResultantsError, match="normal reversed"):
        match_cells(mesh, ShellMesh(mesh.points, (("quad", quads),)))
    with pytest.raises(ResultantsError, match="shell cells"):
        match_cells(mesh, flat_plate(2, 2))
    assert match_cells(mesh, flat_plate(3, 2)).perm is None


def test_read_resultants_maps_and_notes(tmp_path):
    mesh = mixed_plate()
    other, perm = _swapped(mesh)
    R = _resultants(mesh.n_cells)
    inv = np.argsort(perm)
    write_resultants_xdmf(tmp_path / "r.xdmf", other, ["a", "b"], R[:, inv])
    notes: list = []
    _, got = read_resultants(tmp_path / "r.xdmf", mesh.n_cells, mesh=mesh, notes=notes)
    np.testing.assert_allclose(got, R)
    assert len(notes) == 1 and "another order" in notes[0]
    notes = []
    write_resultants_h5(tmp_path / "r.h5", ["a", "b"], R)
    read_resultants(tmp_path / "r.h5", mesh.n_cells, mesh=mesh, notes=notes)
    assert notes == [ASSUMED_NOTE]


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """recover on the mesh with the resultants in its order (HDF5) and triangles-first (XDMF)."""
    tmp = tmp_path_factory.mktemp("order")
    mesh = mixed_plate()
    write_mesh(tmp / "m.vtu", mesh)
    (tmp / "def.toml").write_text(DEF)
    R = _resultants(mesh.n_cells)
    write_resultants_h5(tmp / "ordered.h5", ["a", "b"], R)
    other, perm = _swapped(mesh)
    write_resultants_xdmf(tmp / "swapped.xdmf", other, ["a", "b"], R[:, np.argsort(perm)])
    out = {}
    for name in ("ordered.h5", "swapped.xdmf"):
        proc = run_cli("recover", tmp / "def.toml", tmp / "m.vtu", tmp / name, "-o", tmp / f"{name}.out.h5",
                       "--json")
        assert proc.returncode == 0, proc.stderr
        with h5py.File(tmp / f"{name}.out.h5") as h5:
            out[name] = (proc, h5["envelope/margin"][()])
    bad = ShellMesh(mesh.points * [1.0, 1.2, 1.0], mesh.blocks)
    write_resultants_xdmf(tmp / "other.xdmf", bad, ["a", "b"], R)
    out["refused"] = run_cli("recover", tmp / "def.toml", tmp / "m.vtu", tmp / "other.xdmf", "-o", tmp / "x.h5")
    out["tmp"] = tmp
    return out


def test_recover_maps_a_reordered_xdmf(runs):
    import json

    (p1, m1), (p2, m2) = runs["ordered.h5"], runs["swapped.xdmf"]
    np.testing.assert_allclose(m2, m1, rtol=1e-12)
    s1, s2 = json.loads(p1.stdout), json.loads(p2.stdout)
    assert s1["worst"]["cell"] == s2["worst"]["cell"] == 3
    assert s1["cell_order"] == "assumed" and ASSUMED_NOTE not in p1.stderr   # said in the summary, not as a note
    assert any("another order" in n for n in s2["notes"]) and "mapped onto the mesh by connectivity" in p2.stderr


def test_recover_refuses_resultants_of_another_mesh(runs):
    assert_one_line_error(runs["refused"], "do not match the mesh")
    assert not (runs["tmp"] / "x.h5").exists()


def test_permuted_rows_of_an_array_left_in_its_file():
    from bridge.recover.cell_order import CellOrder

    class RowsOnly:                      # reads increasing rows only, like an HDF5 dataset
        def __init__(self, a):
            self.a, self.shape = a, a.shape

        def __getitem__(self, rows):
            rows = np.asarray(rows)
            assert rows.ndim == 0 or np.all(np.diff(rows) > 0)
            return self.a[rows]

        def __array__(self, dtype=None, copy=None):
            return self.a

    a = np.arange(12.0).reshape(6, 2)
    perm = np.array([3, 0, 5, 1, 4, 2])
    got = CellOrder(perm).apply({"x": RowsOnly(a)})["x"]
    np.testing.assert_array_equal(got[np.array([0, 2, 3])], a[perm[[0, 2, 3]]])
    np.testing.assert_array_equal(got[1:4], a[perm[1:4]])
    np.testing.assert_array_equal(np.asarray(got), a[perm])
    assert got.shape == (6, 2) and len(got) == 6
