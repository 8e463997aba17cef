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
from tests.meshes import cylinder, flat_plate


def write_cloud(path, points: np.ndarray, data: dict) -> None:
    """A VTU of points and point arrays and no cells, as a solver's integration-point writer makes it."""
    from vtkmodules.util.numpy_support import numpy_to_vtk
    from vtkmodules.vtkCommonCore import vtkPoints
    from vtkmodules.vtkCommonDataModel import vtkUnstructuredGrid
    from vtkmodules.vtkIOXML import vtkXMLUnstructuredGridWriter

    grid = vtkUnstructuredGrid()
    pts = vtkPoints()
    pts.SetData(numpy_to_vtk(np.ascontiguousarray(points, dtype=float), deep=True))
    grid.SetPoints(pts)
    for name, arr in data.items():
        a = numpy_to_vtk(np.ascontiguousarray(arr), deep=True)
        a.SetName(name)
        grid.GetPointData().AddArray(a)
    w = vtkXMLUnstructuredGridWriter()
    w.SetFileName(str(path))
    w.SetInputData(grid)
    w.Write()


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
