"""Cell order of a resultants file against the mesh: the same cells in the same order, mapped, or refused.

A resultants file that carries its own topology (XDMF, VTU, Gmsh ...) may list its cells in another order than
the mesh (triangles before quads, renumbered elements). Its cells are matched to the mesh's:

1. the same points and the same cells in the same order: used as is;
2. the same points (within a tolerance): cells matched by their sorted corner nodes (connectivity);
3. otherwise: cells matched by centroid, within a thousandth of the typical cell size.

Every mesh cell must find exactly one file cell, and matched cells must have the same normal (corner order):
a reversed cell would carry its resultants in a mirrored frame. Anything else is refused. A file without
topology (HDF5 ``/resultants``) is taken in the mesh's order, and the run summary says so
(:data:`ASSUMED_NOTE`).

Integration-point clouds (:mod:`bridge.recover.clouds`) are checked by position (:func:`match_points`): the
points given to a cell (by ``points_per_cell`` or by cell ids) must sit on it; points listed in another cell
order are mapped by position, and anything else is refused.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from shells.errors import ResultantsError

from bridge.mesh.shell import ShellMesh

#: Relative tolerance on point coordinates (to the size of the model) for "the same points".
POINT_TOLERANCE = 1e-6
#: Centroid tolerance as a fraction of the median cell size.
CENTROID_TOLERANCE = 1e-3

ASSUMED_NOTE = ("the HDF5 resultants carry no topology: their cells were taken in the mesh's order (write an XDMF "
                "or VTU with the mesh to have the order checked)")


@dataclass(frozen=True)
class CellOrder:
    """How the file's cells map onto the mesh's: ``values_for_mesh = values_in_file[perm]``.

    ``perm`` is None when the orders agree; ``note`` says what was done ('' when nothing).
    """

    perm: np.ndarray | None = None
    note: str = ""

    def apply(self, arrays: Mapping[str, np.ndarray]) -> dict:
        """Cell arrays (first axis over the file's cells) in the mesh's cell order; arrays left in their file
        (read by rows on demand) stay there, read through the permutation."""
        if self.perm is None:
            return dict(arrays)
        return {k: v[self.perm] if isinstance(v, np.ndarray) else Permuted(v, self.perm) for k, v in arrays.items()}


class Permuted:
    """A row-indexable array (e.g. :class:`bridge.mesh.lazy.LazyH5`) seen through a cell permutation."""

    def __init__(self, base, perm: np.ndarray):
        self.base, self.perm = base, perm
        self.shape = (len(perm),) + tuple(base.shape[1:])
        self.ndim = len(self.shape)

    def __len__(self) -> int:
        return self.shape[0]

    def __getitem__(self, rows) -> np.ndarray:
        ids = np.atleast_1d(self.perm[rows])
        order = np.argsort(ids, kind="stable")              # the base reads increasing rows
        out = np.empty((len(ids),) + self.shape[1:], dtype=np.asarray(self.base[ids[order][:1]]).dtype)
        out[order] = self.base[ids[order]]
        return out[0] if np.ndim(self.perm[rows]) == 0 else out

    def __array__(self, dtype=None, copy=None) -> np.ndarray:
        out = np.asarray(self.base)[self.perm]
        return out if dtype is None else out.astype(dtype)


def _corner_keys(mesh: ShellMesh) -> np.ndarray:
    """(ncell, 4) sorted corner node ids, −1 padding for triangles."""
    rows = []
    for corners in mesh.corners():
        k = np.full((len(corners), 4), -1, dtype=np.int64)
        k[:, :corners.shape[1]] = np.sort(corners, axis=1)[:, ::-1]
        rows.append(k)
    return np.concatenate(rows) if rows else np.zeros((0, 4), np.int64)


def _normals(mesh: ShellMesh) -> np.ndarray:
    """Unnormalised normal of each cell from its corners (diagonals of a quad, two edges of a triangle)."""
    parts = []
    for corners in mesh.corners():
        p = mesh.points[corners]
        if corners.shape[1] == 4:
            parts.append(np.cross(p[:, 2] - p[:, 0], p[:, 3] - p[:, 1]))
        else:
            parts.append(np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]))
    return np.concatenate(parts) if parts else np.zeros((0, 3))


def _scale(mesh: ShellMesh) -> float:
    pts = mesh.points
    return float(np.linalg.norm(pts.max(axis=0) - pts.min(axis=0))) if len(pts) else 1.0


def _same_points(a: ShellMesh, b: ShellMesh) -> bool:
    return a.points.shape == b.points.shape and bool(
        np.allclose(a.points, b.points, rtol=0.0, atol=POINT_TOLERANCE * max(_scale(a), 1e-300)))


def _identical(a: ShellMesh, b: ShellMesh) -> bool:
    return _same_points(a, b) and len(a.blocks) == len(b.blocks) and all(
        ta == tb and ca.shape == cb.shape and np.array_equal(ca, cb) for (ta, ca), (tb, cb) in zip(a.blocks, b.blocks))


def _by_connectivity(mesh: ShellMesh, other: ShellMesh) -> np.ndarray | None:
    ka, kb = _corner_keys(mesh), _corner_keys(other)
    uniq, inv = np.unique(np.concatenate([ka, kb]), axis=0, return_inverse=True)
    inv = inv.ravel()
    ia, ib = inv[:len(ka)], inv[len(ka):]
    if len(np.unique(ib)) != len(ib) or len(np.unique(ia)) != len(ia):
        return None
    where = np.full(len(uniq), -1, dtype=np.int64)
    where[ib] = np.arange(len(ib))
    perm = where[ia]
    return None if (perm < 0).any() else perm


def _cell_size(mesh: ShellMesh) -> float:
    c = mesh.centroids()
    first = np.concatenate([mesh.points[corners[:, 0]] for corners in mesh.corners()])
    return float(np.median(np.linalg.norm(first - c, axis=1)))


def _by_centroids(mesh: ShellMesh, other: ShellMesh, source: str) -> np.ndarray:
    from scipy.spatial import cKDTree

    tol = CENTROID_TOLERANCE * _cell_size(mesh)
    ca = mesh.centroids()
    dist, idx = cKDTree(other.centroids()).query(ca)
    far = np.flatnonzero(~(dist <= tol))
    if far.size:
        i = int(far[0])
        raise ResultantsError(
            f"the cells of the resultants file do not match the mesh: {far.size} mesh cell(s) have no file cell "
            f"within {tol:.3g} of their centroid (first: cell {i} at {np.round(ca[i], 6).tolist()}, nearest "
            f"{dist[i]:.3g} away); write the resultants on this mesh", source)
    if np.bincount(idx, minlength=other.n_cells).max() > 1:
        raise ResultantsError("the cells of the resultants file do not match the mesh one to one (two mesh cells "
                              "share a file cell); write the resultants on this mesh", source)
    return idx.astype(np.int64)


def match_cells(mesh: ShellMesh, other: ShellMesh, source: str = "") -> CellOrder:
    """Map the cells of ``other`` (a resultants file's own mesh) onto ``mesh``, or refuse.

    Raises
    ------
    ResultantsError
        A different cell count, a mesh cell without its file cell, or a cell with the opposite normal.
    """
    if other.n_cells != mesh.n_cells:
        raise ResultantsError(f"the file has {other.n_cells} shell cells but the mesh has {mesh.n_cells}; use "
                              "the result file of this mesh", source)
    if _identical(mesh, other):
        return CellOrder()
    perm, how = None, "connectivity"
    if _same_points(mesh, other):
        perm = _by_connectivity(mesh, other)
    if perm is None:
        perm, how = _by_centroids(mesh, other, source), "centroids"
    flipped = np.flatnonzero(np.einsum("ij,ij->i", _normals(mesh), _normals(other)[perm]) < 0)
    if flipped.size:
        raise ResultantsError(
            f"{flipped.size} cell(s) of the resultants file run the other way round (normal reversed; first: mesh "
            f"cell {int(flipped[0])}), so their resultants are in a mirrored frame; write the resultants with the "
            "mesh's node order", source)
    moved = int(np.count_nonzero(perm != np.arange(len(perm))))
    if moved == 0:
        return CellOrder()
    return CellOrder(perm, f"the resultants file lists its cells in another order than the mesh ({moved} of "
                           f"{len(perm)} cells elsewhere); mapped onto the mesh by {how}")


#: A point of a cloud may lie this many times its cell's radius (largest corner distance from the centroid)
#: from the centroid: room for points off the reference surface (through the thickness) and curved cells.
POINT_REACH = 1.5


def _radii(mesh: ShellMesh, centres: np.ndarray) -> np.ndarray:
    """Largest distance of a cell's corners from its centroid; shape (n_cells,)."""
    parts = [np.linalg.norm(mesh.points[c] - centres[i0:i0 + len(c), None, :], axis=2).max(axis=1)
             for c, i0 in zip(mesh.corners(), mesh.block_offsets()[:-1])]
    return np.concatenate(parts) if parts else np.zeros(0)


def _group_means(points: np.ndarray, cells: np.ndarray, n_cells: int) -> tuple[np.ndarray, np.ndarray]:
    count = np.bincount(cells, minlength=n_cells)
    mean = np.column_stack([np.bincount(cells, points[:, j], minlength=n_cells) for j in range(3)])
    with np.errstate(invalid="ignore", divide="ignore"):
        return mean / count[:, None], count


def _far_points(points, cells, centres, radii) -> np.ndarray:
    return np.flatnonzero(np.linalg.norm(points - centres[cells], axis=1) > POINT_REACH * radii[cells] + 1e-12)


def match_points(mesh: ShellMesh, points: np.ndarray, cells: np.ndarray, source: str = "") -> tuple[np.ndarray, str]:
    """Check the points of a point cloud against the cells they were given to; map them by position or refuse.

    Each group of points (the points given to one cell) must have its mean nearer that cell's centroid than any
    other's (within 1/1000 of the median cell size), and every point must lie within :data:`POINT_REACH` cell
    radii of the centroid. When the groups sit on other cells — a cloud listed in another cell order than the
    mesh — and each group's mean is clearly nearest one cell (less than half as far as from the next), one group
    per cell, and the points then lie on their cells, the groups are mapped onto those cells with a note.

    Parameters
    ----------
    mesh : ShellMesh
        The model mesh.
    points : ndarray, shape (n_points, 3)
        The cloud's point coordinates, in the mesh's length unit.
    cells : ndarray of int, shape (n_points,)
        The cell each point was given to (0 … n_cells − 1).
    source : str
        The cloud's file, for messages.

    Returns
    -------
    cells : ndarray of int, shape (n_points,)
        The cell of each point (``cells`` itself when the positions agree).
    note : str
        What was mapped ('' when nothing).

    Raises
    ------
    ResultantsError
        Points that sit on other cells than given and cannot be mapped one group per cell by position.
    """
    from scipy.spatial import cKDTree

    n = mesh.n_cells
    points = np.asarray(points, dtype=np.float64)
    if not np.isfinite(points).all():
        bad = int(np.flatnonzero(~np.isfinite(points).all(axis=1))[0])
        raise ResultantsError(f"point {bad} of the point cloud has a non-finite coordinate; give the solver's "
                              "complete result file", source)
    centres = mesh.centroids()
    radii = _radii(mesh, centres)
    tol = CENTROID_TOLERANCE * _cell_size(mesh)
    mean, count = _group_means(points, cells, n)
    groups = np.flatnonzero(count)
    tree = cKDTree(centres)
    dist, near = tree.query(mean[groups], k=min(2, n))
    dist, near = dist.reshape(len(groups), -1), near.reshape(len(groups), -1)
    own = np.linalg.norm(mean[groups] - centres[groups], axis=1)
    wrong = groups[~(own <= dist[:, 0] + tol)]
    if wrong.size == 0 and _far_points(points, cells, centres, radii).size == 0:
        return cells, ""
    target = near[:, 0]
    clear = dist[:, 0] < 0.5 * dist[:, 1] if dist.shape[1] > 1 else np.ones(len(groups), bool)
    to = np.full(n, -1, dtype=np.int64)
    to[groups] = target
    mapped = to[cells]
    if clear.all() and len(np.unique(target)) == len(target) and _far_points(points, mapped, centres,
                                                                              radii).size == 0:
        moved = int(np.count_nonzero(target != groups))
        return mapped, (f"the integration points of {source or 'the point cloud'} are listed in another cell order "
                        f"than the mesh ({moved} of {len(groups)} cells elsewhere); mapped onto the mesh by the "
                        "points' positions")
    if wrong.size:
        i = int(wrong[0])
        where = (f"{wrong.size} cell(s) get points that sit on other cells (first: cell {i}, its points' mean at "
                 f"{np.round(mean[i], 6).tolist()} is {np.linalg.norm(mean[i] - centres[i]):.3g} from its centroid)")
    else:
        k = int(_far_points(points, cells, centres, radii)[0])
        where = (f"point {k} at {np.round(points[k], 6).tolist()} lies outside its cell {int(cells[k])} (centroid "
                 f"{np.round(centres[cells[k]], 6).tolist()})")
    raise ResultantsError(f"the integration points do not match the mesh's cells: {where}, and they cannot be mapped "
                          "one cell each by position; check [result_files] points_per_cell / point_cell_id and that "
                          "the file is of this mesh, in its length unit", source)
