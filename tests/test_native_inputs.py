"""Native solver files: integration-point clouds, tensor arrays, picked components, files merged by case name,
global tensors projected on curved shells, per-cell axes vectors, ply values at any position through the
thickness.

Each input is built from known resultants (or ply values) written the way a solver writes them; reading must
give the known values back. The projection of a global tensor on a cell's plane, Eᵀ T E with E = [x y n], is
the change of basis of a second-order tensor (common practice).
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.definition.result_files import ResultFiles, parse_result_files
from bridge.definition.resultants import ResultantFields, ResultantSettings, parse_fields
from bridge.mesh.formats import vtu
from bridge.model.frames import element_frames
from bridge.recover.resultants import CellAxes, ResultantSource, read_resultants
from bridge.recover.writers import resultant_arrays
from shells.errors import ResultantsError
from tests.meshes import cylinder, flat_plate, write_cloud


def tensor9(R: np.ndarray, part: str) -> np.ndarray:
    """N (or M) with Q in its third row and column, as (n, 9) row-major tensors."""
    n = len(R)
    T = np.zeros((n, 3, 3))
    a = R[:, 0:3] if part == "N" else R[:, 3:6]
    T[:, 0, 0], T[:, 1, 1], T[:, 0, 1], T[:, 1, 0] = a[:, 0], a[:, 1], a[:, 2], a[:, 2]
    if part == "N":
        T[:, 0, 2] = T[:, 2, 0] = R[:, 6]
        T[:, 1, 2] = T[:, 2, 1] = R[:, 7]
    return T.reshape(n, 9)


@pytest.fixture
def plate():
    return flat_plate(3, 2)


@pytest.mark.parametrize("how", ["per_cell", "ids", "nearest"])
def test_integration_point_cloud_is_reduced_per_cell(tmp_path, plate, how):
    n, k = plate.n_cells, 4
    R = np.random.default_rng(1).normal(size=(n, 8))
    noise = np.random.default_rng(2).normal(size=(n, k, 8)) * 1e-3
    noise -= noise.mean(axis=1, keepdims=True)                  # the points average to R exactly
    centre = plate.centroids()
    offsets = np.array([[-0.1, -0.1, 0], [0.1, -0.1, 0], [0.1, 0.1, 0], [-0.1, 0.1, 0]])
    offsets[2] *= 0.1                                            # point 2 sits nearest the centroid
    pts = (centre[:, None, :] + offsets[None]).reshape(-1, 3)
    vals = (R[:, None, :] + noise).reshape(-1, 8)
    order = np.random.default_rng(3).permutation(n * k) if how == "ids" else np.arange(n * k)
    data = {"F": tensor9(vals, "N")[order], "MOM": tensor9(vals, "M")[order]}
    if how == "ids":
        data["EID"] = (np.repeat(np.arange(n), k) + 101)[order].astype(np.int32)
    write_cloud(tmp_path / "gauss.vtu", pts[order], data)
    options = {"per_cell": ResultFiles(points_per_cell=4), "nearest": ResultFiles(points_per_cell=4,
                                                                                  integration_points="nearest"),
               "ids": ResultFiles(point_cell_id="EID", mesh_cell_id="KID")}[how]
    mesh = plate.with_cell_data({"KID": np.arange(n) + 101})
    fields = parse_fields({"N": {"array": "F", "components": ["xx", "yy", "xy"]},
                           "M": {"array": "MOM", "components": [0, 4, 1]},
                           "Q": {"array": "F", "components": ["xz", "zy"]}})
    src = ResultantSource([str(tmp_path / "gauss.vtu")], n, fields, ResultantSettings(), CellAxes(), options, mesh)
    got = src.read(0, n)[0]
    want = R if how != "nearest" else (R + noise[:, 2])
    np.testing.assert_allclose(got, want, atol=1e-12)


def test_files_merge_by_case_name_from_stems_or_folders(tmp_path, plate):
    n = plate.n_cells
    R = np.random.default_rng(5).normal(size=(2, n, 8))
    for case, j in (("pull", 0), ("bend", 1)):
        (tmp_path / case).mkdir()
        arr = resultant_arrays(R[j])
        vtu.write(tmp_path / case / "forces.vtu", plate, {"N": arr["N"], "Q": arr["Q"]})
        vtu.write(tmp_path / case / "moments.vtu", plate, {"M": arr["M"]})
    paths = [str(tmp_path / c / f) for c in ("pull", "bend") for f in ("forces.vtu", "moments.vtu")]
    src = ResultantSource(paths, n, options=ResultFiles(case_names="folder"))
    assert src.names == ("pull", "bend")
    np.testing.assert_array_equal(src.read(0, n), R)
    with pytest.raises(ResultantsError, match="in both"):
        ResultantSource(paths, n)                                 # by stem: forces / moments, each twice


def test_global_tensors_are_projected_on_a_curved_shell(tmp_path):
    mesh = cylinder()
    n = mesh.n_cells
    x, y, nrm = element_frames(mesh)
    R = np.random.default_rng(6).normal(size=(n, 8))
    E = np.stack([x, y, nrm], axis=-1)                          # columns: the element axes in global axes
    glob = {}
    for part, name in (("N", "FG"), ("M", "MG")):
        local = tensor9(R, part).reshape(n, 3, 3)
        glob[name] = np.einsum("cia,cab,cjb->cij", E, local, E).reshape(n, 9)   # T_g = E T_l Eᵀ
    vtu.write(tmp_path / "g.vtu", mesh, glob)
    _, got = read_resultants(tmp_path / "g.vtu", n, ResultantFields("FG", "MG", "FG"),
                             ResultantSettings(frame="global"), frames=(x, y, nrm))
    np.testing.assert_allclose(got[0], R, atol=1e-12)


def test_six_component_tensors_need_their_order(tmp_path, plate):
    n = plate.n_cells
    R = np.random.default_rng(7).normal(size=(n, 8))
    voigt = np.zeros((n, 6))                                    # xx yy zz yz xz xy
    voigt[:, [0, 1, 5]] = R[:, 0:3]
    voigt[:, [4, 3]] = R[:, 6:8]
    vtu.write(tmp_path / "v.vtu", plate, {"F6": voigt, "M": R[:, 3:6]})
    fields = parse_fields({"N": {"array": "F6", "components": ["xx", "yy", "xy"]}, "M": "M",
                           "Q": {"array": "F6", "components": ["xz", "yz"]}})
    with pytest.raises(ResultantsError, match="tensor_order"):
        ResultantSource([str(tmp_path / "v.vtu")], n, fields)
    src = ResultantSource([str(tmp_path / "v.vtu")], n, fields, options=parse_result_files({"tensor_order": "voigt"}))
    np.testing.assert_array_equal(src.read(0, n)[0], R)


def test_cloud_without_a_mapping_is_refused(tmp_path, plate):
    write_cloud(tmp_path / "c.vtu", np.zeros((4 * plate.n_cells, 3)), {"N": np.zeros((4 * plate.n_cells, 3))})
    with pytest.raises(ResultantsError, match="points_per_cell"):
        ResultantSource([str(tmp_path / "c.vtu")], plate.n_cells)
    with pytest.raises(ResultantsError, match="not 3 per cell"):
        ResultantSource([str(tmp_path / "c.vtu")], plate.n_cells, options=ResultFiles(points_per_cell=3))


def distorted_plate():
    """A 4 × 3 plate whose inner nodes are moved off the grid: every quad is a general (non-parallel) quad."""
    mesh = flat_plate(4, 3)
    pts = np.array(mesh.points)
    inner = (pts[:, 0] > 0) & (pts[:, 0] < 2) & (pts[:, 1] > 0) & (pts[:, 1] < 1)
    pts[inner, :2] += np.random.default_rng(11).uniform(-0.08, 0.08, size=(inner.sum(), 2))
    return type(mesh)(pts, mesh.blocks)


def gauss_points(mesh) -> np.ndarray:
    """(n_cells, 4, 3) the 2 × 2 Gauss points of each bilinear quad, x(ξ, η) = Σ Nᵢ(ξ, η) xᵢ at ξ, η = ±1/√3
    (the isoparametric map of a 4-node element; common practice)."""
    g = 1 / np.sqrt(3)
    xi = np.array([[-g, -g], [g, -g], [g, g], [-g, g]])
    corner = np.array([[-1, -1], [1, -1], [1, 1], [-1, 1]])
    shape = 0.25 * (1 + xi[:, None, 0] * corner[None, :, 0]) * (1 + xi[:, None, 1] * corner[None, :, 1])
    return np.einsum("pk,ckd->cpd", shape, mesh.points[mesh.corners()[0]])


def cloud_source(tmp_path, mesh, pts, vals, options=ResultFiles(points_per_cell=4), extra=None):
    data = {"N": vals[:, 0:3], "M": vals[:, 3:6], "Q": vals[:, 6:8], **(extra or {})}
    write_cloud(tmp_path / "gauss.vtu", pts, data)
    return ResultantSource([str(tmp_path / "gauss.vtu")], mesh.n_cells, options=options, mesh=mesh)


@pytest.mark.parametrize("how", ["reversed", "shuffled", "ids-contradict-positions"])
def test_cloud_in_another_cell_order_is_mapped_by_position(tmp_path, how):
    """Points and values listed in another cell order than the mesh: mapped by the points' positions (the mean
    of a bilinear cell's 2 × 2 Gauss points is its parametric centre, the mean of its corners)."""
    mesh = distorted_plate()
    n = mesh.n_cells
    R = np.random.default_rng(12).normal(size=(n, 8))
    perm = np.arange(n)[::-1] if how == "reversed" else np.random.default_rng(13).permutation(n)
    pts, vals = gauss_points(mesh)[perm].reshape(-1, 3), np.repeat(R[perm], 4, axis=0)
    options, extra = ResultFiles(points_per_cell=4), None
    if how == "ids-contradict-positions":                  # ids say cell order, the points say otherwise
        options, extra = ResultFiles(point_cell_id="EID", id_base=0), {"EID": np.repeat(np.arange(n), 4)}
    src = cloud_source(tmp_path, mesh, pts, vals, options, extra)
    np.testing.assert_allclose(src.read(0, n)[0], R, atol=1e-12)
    assert any("another cell order" in note and "by the points' positions" in note for note in src.notes)
    in_order = cloud_source(tmp_path, mesh, gauss_points(mesh).reshape(-1, 3), np.repeat(R, 4, axis=0))
    np.testing.assert_allclose(in_order.read(0, n)[0], R, atol=1e-12)
    assert not in_order.notes


@pytest.mark.parametrize("how", ["length-unit", "point-major", "shifted-one-point", "other-mesh"])
def test_cloud_whose_points_sit_on_other_cells_is_refused(tmp_path, how):
    """Points that sit on no cell they are given to, and cannot be mapped one group per cell: refused."""
    mesh = distorted_plate()
    n = mesh.n_cells
    g = gauss_points(mesh)
    pts = {"length-unit": 1000 * g.reshape(-1, 3),            # the solver's model in another length unit
           "point-major": g.transpose(1, 0, 2).reshape(-1, 3),  # every cell's first point, then every second ...
           "shifted-one-point": np.roll(g.reshape(-1, 3), 1, axis=0),
           "other-mesh": gauss_points(flat_plate(4, 3, lx=4.0)).reshape(-1, 3)}[how]
    with pytest.raises(ResultantsError, match="do not match the mesh's cells"):
        cloud_source(tmp_path, mesh, pts, np.zeros((4 * n, 8)))


def test_cloud_needs_the_mesh(tmp_path):
    mesh = distorted_plate()
    write_cloud(tmp_path / "c.vtu", gauss_points(mesh).reshape(-1, 3), {"N": np.zeros((4 * mesh.n_cells, 3))})
    with pytest.raises(ResultantsError, match="give the model mesh"):
        ResultantSource([str(tmp_path / "c.vtu")], mesh.n_cells, options=ResultFiles(points_per_cell=4))


def test_a_vtu_too_big_to_read_whole_is_refused_before_reading(tmp_path, plate, monkeypatch):
    """VTU files are read whole: one whose estimate (its text and twice its arrays, uncompressed sizes read from
    the block headers of a compressed file) exceeds the memory available is refused in one line naming it and
    the way out (XDMF + HDF5); over 1 GiB of estimate a note says so."""
    import bridge.guards
    import bridge.recover.files as files

    R = np.random.default_rng(3).normal(size=(plate.n_cells, 8))
    path = tmp_path / "big.vtu"
    vtu.write(path, plate, resultant_arrays(R))
    size = path.stat().st_size
    need = files.whole_read_bytes(str(path))
    assert b"compressor=" in path.read_bytes()[:1000]
    assert need >= size + 2 * R.nbytes + 2 * plate.points.nbytes           # every array counted uncompressed
    monkeypatch.setattr(bridge.guards, "available_memory", lambda: need - 1)
    with pytest.raises(bridge.guards.ResourceError) as err:
        files.open_step_files(str(path), plate.n_cells, mesh=plate)
    assert "big.vtu" in str(err.value) and "XDMF with HDF5" in str(err.value) and "of memory" in str(err.value)
    monkeypatch.setattr(bridge.guards, "available_memory", lambda: 1 << 50)
    monkeypatch.setattr(files, "WHOLE_READ_NOTE_BYTES", need - 1)
    opened = files.open_step_files(str(path), plate.n_cells, mesh=plate)
    assert any("big.vtu read whole" in n and "XDMF with HDF5" in n for n in opened.notes)
    monkeypatch.setattr(files, "WHOLE_READ_NOTE_BYTES", 1 << 30)
    assert not any("read whole" in n for n in files.open_step_files(str(path), plate.n_cells, mesh=plate).notes)
