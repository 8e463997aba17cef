"""Point clouds: result files whose values sit at points (integration points) rather than on cells.

Solvers write integration-point results as a VTU or legacy VTK file of points with point data and no
cells (or vertex cells only). :func:`read_point_cloud` reads such a file with VTK's own readers.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from shells.errors import MeshError


@dataclass(frozen=True)
class PointCloud:
    """Points (n, 3) and their arrays (each with n rows) of one file."""

    points: np.ndarray
    point_data: dict
    source: str = ""


def is_point_cloud(head: bytes) -> bool:
    """True when a file's first bytes show a VTK XML unstructured grid with points and no cells."""
    return b"<VTKFile" in head and b"UnstructuredGrid" in head and b'NumberOfCells="0"' in head


def read_point_cloud(path: str) -> PointCloud:
    """Read the points and point arrays of a VTU (VTK XML) or legacy VTK file; cells, if any, are ignored.

    VTK's own readers are used (meshio cannot read a VTU without cells).

    Raises
    ------
    MeshError
        If the file cannot be read or holds no point arrays.
    """
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkIOLegacy import vtkUnstructuredGridReader
    from vtkmodules.vtkIOXML import vtkXMLUnstructuredGridReader

    src = str(path)
    if not os.path.isfile(src):
        raise MeshError("file not found; check the path", src)
    with open(src, "rb") as fh:
        head = fh.read(256)
    reader = vtkUnstructuredGridReader() if head.lstrip().startswith(b"# vtk DataFile") else \
        vtkXMLUnstructuredGridReader()
    reader.SetFileName(src)
    reader.Update()
    grid = reader.GetOutput()
    if grid is None or grid.GetPoints() is None:
        raise MeshError("cannot read the file as a VTK point cloud (no points); check it is complete", src)
    points = np.asarray(vtk_to_numpy(grid.GetPoints().GetData()), dtype=np.float64).reshape(-1, 3)
    pd = grid.GetPointData()
    data = {}
    for k in range(pd.GetNumberOfArrays()):
        arr = pd.GetArray(k)
        if arr is not None and arr.GetName():
            data[arr.GetName()] = np.asarray(vtk_to_numpy(arr)).reshape(len(points), -1)
    if not data:
        raise MeshError("the file has neither shell cells nor point arrays; give the solver's result file", src)
    return PointCloud(points, data, src)
