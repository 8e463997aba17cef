"""Integration-point clouds reduced to one value per cell (``[result_files]``, docs/definition.md).

A solver's integration-point file holds points and point arrays. Each point belongs to a cell, either by
position (``points_per_cell`` points per cell, in cell order) or by a point array of cell ids
(``point_cell_id``, mapped through the mesh array ``mesh_cell_id`` or taken as positions from ``id_base``).
The points' positions are then checked against the mesh's cells (:func:`bridge.recover.cell_order.match_points`):
points listed in another cell order are mapped by position, points that sit on no cell they could belong to are
refused. A cell's value is the mean of its points (``integration_points = "average"``) or the value at its point
nearest the cell centroid (``"nearest"``). Cells without points get NaN (flagged later as non-finite).
"""

from __future__ import annotations

import numpy as np

from shells.errors import ResultantsError

from bridge.definition.result_files import ResultFiles
from bridge.mesh.cloud import PointCloud
from bridge.mesh.shell import ShellMesh
from bridge.recover.cell_order import match_points


def point_cells(cloud: PointCloud, n_cells: int, options: ResultFiles,
                mesh: ShellMesh | None) -> tuple[np.ndarray, str]:
    """The cell (0 … n_cells − 1) of every point of ``cloud``, checked against the mesh by position.

    Returns
    -------
    cells : ndarray of int, shape (n_points,)
    note : str
        What was mapped by position ('' when the points sat on the cells they were given to).

    Raises
    ------
    ResultantsError
        When the file does not say how its points map to cells, the mapping does not fit the mesh, or the
        points sit on other cells and cannot be mapped by position (:func:`match_points`).
    """
    cells = _declared_cells(cloud, n_cells, options, mesh)
    if mesh is None:
        raise ResultantsError("a point cloud is checked against the mesh's cells by position; give the model mesh",
                              cloud.source)
    return match_points(mesh, cloud.points, cells, cloud.source)


def _declared_cells(cloud: PointCloud, n_cells: int, options: ResultFiles, mesh: ShellMesh | None) -> np.ndarray:
    """The cell of every point as the file and ``[result_files]`` declare it (before the position check)."""
    n = len(cloud.points)
    src = cloud.source
    if options.points_per_cell is not None:
        k = options.points_per_cell
        if n != k * n_cells:
            raise ResultantsError(f"the point cloud has {n} points, not {k} per cell × {n_cells} cells; fix "
                                  "[result_files] points_per_cell or use the file of this mesh", src)
        return np.repeat(np.arange(n_cells), k)
    if options.point_cell_id is None:
        raise ResultantsError("a point-cloud file (integration points, no shell cells): say how its points map to "
                              "cells with [result_files] points_per_cell = N or point_cell_id = \"array\"", src)
    if options.point_cell_id not in cloud.point_data:
        raise ResultantsError(f"[result_files] point_cell_id: no point array {options.point_cell_id!r}; found "
                              f"{', '.join(sorted(cloud.point_data))}", src)
    ids = np.asarray(cloud.point_data[options.point_cell_id]).reshape(n, -1)[:, 0]
    if not np.all(np.isfinite(ids)) or np.any(ids != np.round(ids)):
        raise ResultantsError(f"point array {options.point_cell_id!r} holds non-integer cell ids", src)
    ids = ids.astype(np.int64)
    if options.mesh_cell_id is not None:
        if mesh is None or options.mesh_cell_id not in mesh.cell_data:
            found = ", ".join(sorted(mesh.cell_data)) if mesh is not None else "no mesh given"
            raise ResultantsError(f"[result_files] mesh_cell_id: the mesh has no cell array "
                                  f"{options.mesh_cell_id!r}; found {found}", src)
        mesh_ids = np.asarray(mesh.cell_data[options.mesh_cell_id]).reshape(n_cells, -1)[:, 0].astype(np.int64)
        order = np.argsort(mesh_ids, kind="stable")
        if np.any(np.diff(mesh_ids[order]) == 0):
            raise ResultantsError(f"mesh cell array {options.mesh_cell_id!r} repeats ids; it cannot name cells", src)
        pos = np.clip(np.searchsorted(mesh_ids[order], ids), 0, n_cells - 1)
        bad = mesh_ids[order][pos] != ids
        cells = order[pos]
    else:
        cells = ids - options.id_base
        bad = (cells < 0) | (cells >= n_cells)
    if bad.any():
        raise ResultantsError(f"{int(bad.sum())} point(s) name cells the mesh does not have (e.g. id "
                              f"{int(ids[np.flatnonzero(bad)[0]])}); check [result_files] point_cell_id, "
                              "mesh_cell_id and id_base", src)
    return cells


def cloud_to_cells(cloud: PointCloud, n_cells: int, options: ResultFiles,
                   mesh: ShellMesh | None) -> tuple[dict[str, np.ndarray], str]:
    """Every point array of ``cloud`` as a cell array (n_cells, k): averaged, or taken at the nearest point;
    with the note of :func:`point_cells`."""
    cells, note = point_cells(cloud, n_cells, options, mesh)
    count = np.bincount(cells, minlength=n_cells)
    out = {}
    if options.integration_points == "nearest":
        d = np.linalg.norm(cloud.points - mesh.centroids()[cells], axis=1)
        order = np.lexsort((d, cells))                       # by cell, nearest first
        first = order[np.r_[True, cells[order][1:] != cells[order][:-1]]]
        pick = np.full(n_cells, -1)
        pick[cells[first]] = first
    for name, arr in cloud.point_data.items():
        if name == options.point_cell_id:
            continue
        a = np.asarray(arr, dtype=np.float64).reshape(len(cells), -1)
        if options.integration_points == "nearest":
            v = np.full((n_cells, a.shape[1]), np.nan)
            v[pick >= 0] = a[pick[pick >= 0]]
        else:
            v = np.zeros((n_cells, a.shape[1]))
            np.add.at(v, cells, a)
            with np.errstate(invalid="ignore", divide="ignore"):
                v /= count[:, None]
        out[name] = v
    return out, note
