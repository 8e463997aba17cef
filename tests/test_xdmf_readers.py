"""XDMF as others write and read it: meshio's time series (XInclude) in; our files out, the same in every reader.

Our writer's cell arrays of every component count must open with the same values and the same number of
components in meshio, in pyvista and in VTK's own XDMF reader (vtkXdmfReader), which pads a 2-component
``Vector`` to 3 and reads a (n, k) ``Matrix`` as one tuple (found by running it; tests/test_xdmf_readers.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.mesh.formats import xdmf
from bridge.recover.resultants import read_resultants
from tests.meshes import mixed_plate

WIDTHS = (1, 2, 3, 5, 6, 9, 14)


def arrays(n: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(4)
    return {f"a{k}": (rng.normal(size=n) if k == 1 else rng.normal(size=(n, k))) for k in WIDTHS}


def _vtk(path):
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkIOXdmf2 import vtkXdmfReader

    r = vtkXdmfReader()
    r.SetFileName(str(path))
    r.Update()
    cd = r.GetOutputDataObject(0).GetCellData()
    return {cd.GetArray(i).GetName(): vtk_to_numpy(cd.GetArray(i)) for i in range(cd.GetNumberOfArrays())}


def _meshio(path):
    import meshio

    m = meshio.read(str(path))
    return {k: np.concatenate(v) for k, v in m.cell_data.items()}


def _pyvista(path):
    """pyvista 0.49's own XDMF reader needs a time value: series open directly, single grids through VTK's reader."""
    import pyvista
    from vtkmodules.vtkIOXdmf2 import vtkXdmfReader

    if "Temporal" in path.read_text():
        g = pyvista.read(str(path))
    else:
        r = vtkXdmfReader()
        r.SetFileName(str(path))
        r.Update()
        g = pyvista.wrap(r.GetOutputDataObject(0))
    return {k: np.asarray(g.cell_data[k]) for k in g.cell_data.keys()}


def _meshio_series(path):
    import meshio

    with meshio.xdmf.TimeSeriesReader(str(path)) as r:
        r.read_points_cells()
        _, _, cell_data = r.read_data(0)
    return {k: np.concatenate(v) for k, v in cell_data.items()}


@pytest.mark.parametrize("series", [False, True], ids=["grid", "series"])
@pytest.mark.parametrize("reader", [_meshio, _pyvista, _vtk], ids=["meshio", "pyvista", "vtkXdmfReader"])
def test_every_array_opens_with_its_true_component_count(tmp_path, reader, series):
    mesh = mixed_plate()
    data = arrays(mesh.n_cells)
    if series:
        xdmf.write_series(tmp_path / "out.xdmf", mesh, [("only", data)])
        reader = {_meshio: _meshio_series}.get(reader, reader)
    else:
        xdmf.write(tmp_path / "out.xdmf", mesh, data)
    got = reader(tmp_path / "out.xdmf")
    for name, want in data.items():
        a = np.asarray(got[name])
        assert a.reshape(len(want), -1).shape == want.reshape(len(want), -1).shape, name
        np.testing.assert_allclose(a.reshape(len(want), -1), want.reshape(len(want), -1), err_msg=name)
    ours = xdmf.read_series(tmp_path / "out.xdmf")[1][0].cell_data
    for name, want in data.items():
        assert np.asarray(ours[name]).shape == want.shape
        np.testing.assert_array_equal(ours[name], want)


def test_meshio_time_series_with_xinclude_is_read(tmp_path, monkeypatch):
    import meshio

    monkeypatch.chdir(tmp_path)                # meshio 5.3.5 writes the .h5 into the working folder
    mesh = mixed_plate()
    R = np.random.default_rng(8).normal(size=(2, mesh.n_cells, 8))
    cells = [(t, np.asarray(c)) for t, c in mesh.blocks]
    off = mesh.block_offsets()
    with meshio.xdmf.TimeSeriesWriter("ts.xdmf") as w:
        w.write_points_cells(np.asarray(mesh.points), cells)
        for t in range(2):
            split = {k: [v[off[b]:off[b + 1]] for b in range(len(cells))]
                     for k, v in {"N": R[t, :, :3], "M": R[t, :, 3:6], "Q": R[t, :, 6:]}.items()}
            w.write_data(float(t), cell_data=split)
    assert "include" in (tmp_path / "ts.xdmf").read_text()
    names, got = read_resultants(tmp_path / "ts.xdmf", mesh.n_cells)
    assert names == ("0", "1")
    np.testing.assert_array_equal(got, R)


def test_why_pyvista_read_cannot_open_a_single_grid_file(tmp_path, capsys):
    """pyvista.read (0.49) needs a <Time> in the grid and meshio.read (5.3) refuses one ("Unknown section
    'Time'"): no single-grid XDMF opens in both. pyvista.read fails the same way on meshio's own XDMF output, so
    our single-grid files keep meshio working (docs/meshes.md gives the pyvista routes; a .vtu view opens with
    pyvista.read). If either library changes, this test says so and the docs can be simplified."""
    import meshio
    import pyvista

    mesh = mixed_plate()
    data = arrays(mesh.n_cells)
    m = meshio.Mesh(mesh.points, [("quad", np.array([[0, 1, 2, 3]]))], cell_data={"a": [np.array([1.0])]})
    m.write(tmp_path / "theirs.xdmf")
    xdmf.write(tmp_path / "ours.xdmf", mesh, data)
    for name in ("theirs.xdmf", "ours.xdmf"):
        with pytest.raises(TypeError):
            pyvista.read(str(tmp_path / name))
    timed = (tmp_path / "ours.xdmf").read_text().replace('GridType="Uniform">', 'GridType="Uniform"><Time Value="0"/>', 1)
    (tmp_path / "timed.h5").write_bytes((tmp_path / "ours.h5").read_bytes())
    (tmp_path / "timed.xdmf").write_text(timed.replace("ours.h5:", "timed.h5:"))
    with pytest.raises((Exception, SystemExit)):                 # meshio 5.3 prints its reason, then exits
        meshio.read(str(tmp_path / "timed.xdmf"))
    assert "Unknown section 'Time'" in capsys.readouterr().out
    assert pyvista.read(str(tmp_path / "timed.xdmf")).n_cells == mesh.n_cells
    view = tmp_path / "view.vtu"
    from bridge.mesh.formats import vtu
    vtu.write(view, mesh, data)
    assert pyvista.read(str(view)).n_cells == mesh.n_cells
