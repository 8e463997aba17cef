"""Mesh model and format registry: round trips, detection, errors.

Reference values: node coordinates and cell types of meshes built in
tests/meshes.py (analytic geometry); the other side of each round trip is
meshio 5.3.5 (a general-purpose reference library) or the Gmsh MSH 2.2 / 4.1
layouts of the Gmsh reference manual, written by hand in tests/meshes.py.
"""

from __future__ import annotations

import os
import shutil
import tempfile

import meshio
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from bridge.mesh import formats
from bridge.mesh.formats import gmsh, meshio_other, vtu, xdmf
from bridge.mesh.shell import ShellMesh, shell_mesh_from_blocks
from shells.errors import InputError, MeshError
from tests.meshes import (block_tags, cylinder, flat_plate, mixed_plate, quadratic_plate, warped_plate,
                          write_gmsh22_ascii, write_gmsh41_ascii, write_gmsh_binary)

MESHES = {"quads": lambda: flat_plate(kind="quad"), "tris": lambda: flat_plate(kind="triangle"),
          "mixed": mixed_plate, "quadratic": quadratic_plate, "warped": warped_plate, "cylinder": cylinder}
WRITABLE = [f for f in formats.FORMATS if f.can_write]


def cell_coords(mesh: ShellMesh) -> list[tuple[str, np.ndarray]]:
    """Node coordinates of every cell, per block (independent of node numbering)."""
    return [(t, mesh.points[c]) for t, c in mesh.blocks]


def assert_same_cells(a: ShellMesh, b: ShellMesh) -> None:
    ca, cb = cell_coords(a), cell_coords(b)
    assert [t for t, _ in ca] == [t for t, _ in cb]
    for (_, xa), (_, xb) in zip(ca, cb):
        np.testing.assert_allclose(xa, xb, rtol=0, atol=1e-14)


def sample_data(n: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(7)
    return {"scalar": rng.normal(size=n), "vec3": rng.normal(size=(n, 3)),
            "tensor": rng.normal(size=(n, 2, 3)), "ids": np.arange(n, dtype=np.int64)}


def test_registry_modules_have_the_interface():
    for fmt in formats.FORMATS:
        assert isinstance(fmt.name, str) and fmt.extensions
        assert callable(fmt.sniff) and callable(fmt.read)
        assert fmt.can_write == hasattr(fmt, "write")
    assert {f.name for f in WRITABLE} == {"vtu", "xdmf"}


@pytest.mark.parametrize("fmt", WRITABLE, ids=lambda f: f.name)
@pytest.mark.parametrize("mesh_name", sorted(MESHES))
def test_round_trip_writable_formats(tmp_path, fmt, mesh_name):
    mesh = MESHES[mesh_name]()
    data = sample_data(mesh.n_cells)
    path = tmp_path / f"m{fmt.extensions[0]}"
    formats.write_mesh(path, mesh, data)
    back = formats.read_mesh(path)
    assert_same_cells(back, mesh)
    for key, value in data.items():
        np.testing.assert_array_equal(back.cell_data[key].reshape(mesh.n_cells, -1),
                                      value.reshape(mesh.n_cells, -1))
    assert not list(tmp_path.glob(".*tmp*")), "temporary files left behind"


@pytest.mark.parametrize("mesh_name", ["quads", "mixed", "cylinder"])
def test_meshio_reads_our_xdmf(tmp_path, mesh_name):
    mesh = MESHES[mesh_name]()
    xdmf.write(tmp_path / "m.xdmf", mesh, {"vec3": sample_data(mesh.n_cells)["vec3"]})
    m = meshio.read(tmp_path / "m.xdmf")
    assert [(c.type, len(c.data)) for c in m.cells] == [(t, len(c)) for t, c in mesh.blocks]
    got = np.concatenate(m.cell_data["vec3"])
    np.testing.assert_array_equal(got, sample_data(mesh.n_cells)["vec3"])


def test_xdmf_heavy_data_is_chunked_and_compressed(tmp_path):
    import h5py
    mesh = cylinder()
    xdmf.write(tmp_path / "c.xdmf", mesh, {"s": np.arange(mesh.n_cells, dtype=float)})
    with h5py.File(tmp_path / "c.h5", "r") as h5:
        ds = h5["/mesh/points"]
        assert ds.chunks is not None and ds.compression == "gzip" and ds.shuffle


GMSH_WRITERS = {
    "ascii22": write_gmsh22_ascii,
    "ascii41": write_gmsh41_ascii,
    "binary22": lambda p, m: write_gmsh_binary(p, m, "gmsh22"),
    "binary41": lambda p, m: write_gmsh_binary(p, m, "gmsh"),
}


@pytest.mark.parametrize("writer", sorted(GMSH_WRITERS))
@pytest.mark.parametrize("mesh_name", ["quads", "mixed", "quadratic"])
def test_gmsh_round_trip(tmp_path, writer, mesh_name):
    mesh = MESHES[mesh_name]()
    path = tmp_path / "m.msh"
    GMSH_WRITERS[writer](path, mesh)
    assert formats.detect(path) is gmsh
    back = formats.read_mesh(path)
    assert_same_cells(back, mesh)
    np.testing.assert_array_equal(back.cell_data["gmsh:physical"], block_tags(mesh))
    assert back.tags["gmsh:physical"] == {f"block{b + 1}": b + 1 for b in range(len(mesh.blocks))}


@pytest.mark.parametrize("writer", [write_gmsh22_ascii, write_gmsh41_ascii])
def test_gmsh_line_cells_are_skipped_with_a_note(tmp_path, writer):
    mesh = mixed_plate()
    writer(tmp_path / "m.msh", mesh, lines=np.array([[0, 1], [1, 2], [2, 3]]))
    back = formats.read_mesh(tmp_path / "m.msh")
    assert back.n_cells == mesh.n_cells
    assert any("skipped 3 line" in n for n in back.notes)
    assert "edge" not in back.tags["gmsh:physical"]  # a 1-D name
    np.testing.assert_array_equal(back.cell_data["gmsh:physical"], block_tags(mesh))


def test_read_only_format_through_meshio(tmp_path):
    mesh = mixed_plate()
    path = tmp_path / "m.vtk"
    meshio.write(path, meshio.Mesh(mesh.points, [(t, c) for t, c in mesh.blocks]), file_format="vtk", binary=True)
    assert formats.detect(path) is meshio_other
    assert_same_cells(formats.read_mesh(path), mesh)
    with pytest.raises(MeshError, match="cannot write"):
        formats.write_mesh(tmp_path / "out.vtk", mesh)


def test_content_beats_a_wrong_extension(tmp_path):
    mesh = mixed_plate()
    vtu.write(tmp_path / "a.vtu", mesh, {})
    shutil.copy(tmp_path / "a.vtu", tmp_path / "really_vtu.msh")
    assert formats.detect(tmp_path / "really_vtu.msh") is vtu
    write_gmsh41_ascii(tmp_path / "really_msh.vtu", mesh)
    assert formats.detect(tmp_path / "really_msh.vtu") is gmsh
    xdmf.write(tmp_path / "x.xdmf", mesh, {})
    shutil.copy(tmp_path / "x.xdmf", tmp_path / "x.vtu")  # same stem: x.h5 still beside it
    assert formats.detect(tmp_path / "x.vtu") is xdmf
    assert_same_cells(formats.read_mesh(tmp_path / "x.vtu"), mesh)


def test_unknown_format_and_missing_file(tmp_path):
    (tmp_path / "a.txt").write_text("hello")
    with pytest.raises(MeshError, match="unknown mesh format") as err:
        formats.detect(tmp_path / "a.txt")
    assert "a.txt" in str(err.value) and isinstance(err.value, InputError)
    with pytest.raises(MeshError, match="not found"):
        formats.read_mesh(tmp_path / "none.vtu")


def test_no_shell_cells_names_file_and_content(tmp_path):
    path = tmp_path / "lines.vtu"
    meshio.write(path, meshio.Mesh(np.eye(3), [("line", np.array([[0, 1], [1, 2]]))]), file_format="vtu")
    with pytest.raises(MeshError, match=r"no shell cells.*2 line") as err:
        formats.read_mesh(path)
    assert "lines.vtu" in str(err.value)


def test_reduced_types_and_global_index():
    pts = np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0], [.5, 0, 0], [1, .5, 0], [.5, 1, 0],
                    [0, .5, 0], [.5, .5, 0], [2, 0, 0]], float)
    m = shell_mesh_from_blocks(pts, [("quad9", [[0, 1, 2, 3, 4, 5, 6, 7, 8]]), ("line", [[0, 9]]),
                                     ("triangle", [[1, 9, 2]])],
                               {"v": [np.array([5.0]), np.array([9.0]), np.array([6.0])]})
    assert [t for t, _ in m.blocks] == ["quad8", "triangle"]
    assert m.n_cells == 2 and m.cell_type_of().tolist() == [3, 0]
    np.testing.assert_array_equal(m.cell_data["v"], [5.0, 6.0])
    assert any("quad9" in n for n in m.notes) and any("skipped 1 line" in n for n in m.notes)
    # centroid of the corners: unit square -> (0.5, 0.5, 0); triangle (1,0),(2,0),(1,1) -> (4/3, 1/3) (analytic)
    np.testing.assert_allclose(m.centroids(), [[.5, .5, 0], [4 / 3, 1 / 3, 0]], atol=1e-15)
    assert [c.shape[1] for c in m.corners()] == [4, 3]


def test_mesh_copies_and_freezes_arrays():
    pts = flat_plate().points.copy()
    conn = flat_plate().blocks[0][1].copy()
    m = ShellMesh(pts, (("quad", conn),), {"a": np.zeros(len(conn))})
    pts[0, 0] = 99.0
    assert m.points[0, 0] == 0.0
    with pytest.raises(ValueError):
        m.points[0, 0] = 1.0
    with pytest.raises(MeshError, match="rows"):
        ShellMesh(pts, (("quad", conn),), {"a": np.zeros(3)})
    with pytest.raises(MeshError, match="outside"):
        ShellMesh(pts[:3], (("quad", conn),))


BLOCK_TYPES = {"triangle": 3, "quad": 4, "triangle6": 6, "quad8": 8}


@settings(max_examples=25, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(sorted(BLOCK_TYPES)), st.integers(1, 5)), min_size=1, max_size=6),
       st.integers(0, 2**31))
def test_xdmf_mixed_topology_property(blocks, seed):
    """Any sequence of shell blocks survives our XDMF writer and reader in global-cell order."""
    rng = np.random.default_rng(seed)
    pts = rng.normal(size=(20, 3))
    mesh = ShellMesh(pts, tuple((t, rng.integers(0, 20, size=(k, BLOCK_TYPES[t]))) for t, k in blocks))
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "p.xdmf")
        xdmf.write(path, mesh, {"i": np.arange(mesh.n_cells)})
        back = xdmf.read(path)
    np.testing.assert_array_equal(back.cell_type_of(), mesh.cell_type_of())
    np.testing.assert_array_equal(np.concatenate([c.ravel() for _, c in back.blocks]),
                                  np.concatenate([c.ravel() for _, c in mesh.blocks]))
    np.testing.assert_array_equal(back.cell_data["i"], np.arange(mesh.n_cells))


def test_xdmf_output_replaces_only_its_own_heavy_data(tmp_path):
    """An XDMF pair replaces <stem>.h5 only when it is the heavy data of the XDMF file it replaces."""
    import h5py

    mesh = flat_plate(2, 1)
    xdmf.write(tmp_path / "a.xdmf", mesh, {"s": np.arange(2.0)})
    xdmf.write(tmp_path / "a.xdmf", mesh, {"t": np.arange(2.0)})            # its own pair: replaced
    assert list(xdmf.read(tmp_path / "a.xdmf").cell_data) == ["t"]
    with h5py.File(tmp_path / "b.h5", "w") as h5:                           # someone's results, no b.xdmf
        h5["envelope/margin"] = np.ones(3)
    before = (tmp_path / "b.h5").read_bytes()
    with pytest.raises(MeshError, match="not the heavy data of an existing b.xdmf"):
        xdmf.write(tmp_path / "b.xdmf", mesh)
    xdmf.write(tmp_path / "c.xdmf", mesh)                                   # a stale pair: c.h5 then replaced
    with h5py.File(tmp_path / "c.h5", "a") as h5:                           # ... or given more data
        h5["extra"] = np.ones(2)
    with pytest.raises(MeshError, match="not the heavy data"):
        xdmf.write_series(tmp_path / "c.xdmf", mesh, [("one", {})])
    (tmp_path / "d.h5").write_text("notes")                                 # not even HDF5
    with pytest.raises(MeshError, match="not the heavy data"):
        xdmf.write(tmp_path / "d.xdmf", mesh)
    assert (tmp_path / "b.h5").read_bytes() == before and (tmp_path / "d.h5").read_text() == "notes"
    assert not (tmp_path / "b.xdmf").exists() and not (tmp_path / "d.xdmf").exists()
