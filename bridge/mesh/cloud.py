"""Point clouds: result files whose values sit at points (integration points) rather than on cells.

Solvers write integration-point results as a VTU or legacy VTK file of points with point data and no
cells (or vertex cells only). :func:`read_point_cloud` reads such a file through meshio.
"""

from __future__ import annotations

import contextlib
import io
from dataclasses import dataclass

import numpy as np

from shells.errors import MeshError


@dataclass(frozen=True)
class PointCloud:
    """Points (n, 3) and their arrays (each with n rows) of one file."""

    points: np.ndarray
    point_data: dict
    source: str = ""


def read_point_cloud(path: str) -> PointCloud:
    """Read the points and point arrays of a VTU / VTK file (cells, if any, are ignored).

    Raises
    ------
    MeshError
        If meshio cannot read the file or it holds no point arrays.
    """
    import meshio

    src = str(path)
    fmt = "vtk" if src.lower().endswith(".vtk") else "vtu"
    chatter = io.StringIO()
    try:
        with contextlib.redirect_stdout(chatter), contextlib.redirect_stderr(chatter):
            m = meshio.read(src, file_format=fmt)
    except FileNotFoundError:
        raise MeshError("file not found; check the path", src) from None
    except (Exception, SystemExit) as exc:  # meshio raises many kinds
        raise MeshError(f"cannot read as a {fmt} point cloud: {type(exc).__name__}: "
                        f"{' '.join(str(exc).split())[:200] or 'no reason given'}", src) from None
    points = np.asarray(m.points, dtype=np.float64)
    data = {str(k): np.asarray(v) for k, v in m.point_data.items() if np.asarray(v).shape[:1] == (len(points),)}
    if not data:
        raise MeshError("the file has neither shell cells nor point arrays; give the solver's result file", src)
    return PointCloud(points, data, src)
