"""Element frames: per-cell unit vectors x, y and normal n over the global cell index.

- **n** follows the right-hand rule on the corner nodes (docs/conventions.md):
  triangles ``(p1 − p0) × (p2 − p0)``, quadrilaterals the cross product of the
  diagonals ``(p2 − p0) × (p3 − p1)``, which is the mean normal of a warped
  quadrilateral and does not depend on which corner is taken first.
- **x** is the reference vector projected on the element plane, normalised.
- **y** = n × x.

Fall-back: where the reference is within 5° of the normal
(``|ref̂ · n| > cos 5°``) the projection is ill-defined, and the first global
axis among X, Y, Z that is not within 5° of the normal is used instead (at
most one axis can be that close, so X or Y serves).
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from bridge.mesh.shell import ShellMesh
from shells.errors import MeshError

#: cos 5°: a direction closer than 5° to the normal does not define an in-plane axis.
NEAR_NORMAL_COS = float(np.cos(np.radians(5.0)))
#: Cells whose normal is shorter than this fraction of their size² are degenerate.
DEGENERATE_TOL = 1e-12


def _unit(v: np.ndarray) -> np.ndarray:
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def cell_normals(mesh: ShellMesh) -> tuple[np.ndarray, np.ndarray]:
    """Unnormalised corner normals and a degenerate-cell mask, over the global cells.

    Returns
    -------
    normal : ndarray, shape (n_cells, 3)
        Triangles: twice the area vector; quadrilaterals: the diagonal cross product.
    degenerate : ndarray of bool, shape (n_cells,)
        Cells with repeated corner nodes or a normal shorter than
        :data:`DEGENERATE_TOL` times the squared cell size.
    """
    normals, bad = [], []
    p = mesh.points
    for corners in mesh.corners():
        if corners.shape[1] == 3:
            a, b = p[corners[:, 1]] - p[corners[:, 0]], p[corners[:, 2]] - p[corners[:, 0]]
        else:
            a, b = p[corners[:, 2]] - p[corners[:, 0]], p[corners[:, 3]] - p[corners[:, 1]]
        nrm = np.cross(a, b)
        size2 = np.einsum("ij,ij->i", a, a) + np.einsum("ij,ij->i", b, b)
        s = np.sort(corners, axis=1)
        repeated = (s[:, 1:] == s[:, :-1]).any(axis=1)
        tiny = np.linalg.norm(nrm, axis=1) <= DEGENERATE_TOL * size2
        normals.append(nrm)
        bad.append(repeated | tiny | ~np.isfinite(nrm).all(axis=1))
    return np.concatenate(normals), np.concatenate(bad)


def in_plane(direction: np.ndarray, n: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Project directions on the planes of unit normals ``n``.

    Parameters
    ----------
    direction : ndarray, shape (3,) or (n_cells, 3)
        Directions (any length).
    n : ndarray, shape (n_cells, 3)
        Unit normals.

    Returns
    -------
    unit : ndarray, shape (n_cells, 3)
        Normalised projections (NaN where the direction is near the normal).
    near : ndarray of bool, shape (n_cells,)
        True where ``|d̂ · n| > cos 5°`` or the direction is zero.
    """
    d = np.broadcast_to(np.asarray(direction, dtype=np.float64), n.shape)
    length = np.linalg.norm(d, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        dn = np.einsum("ij,ij->i", d, n)
        near = ~(np.abs(dn) <= NEAR_NORMAL_COS * length) | (length == 0)
        proj = d - dn[:, None] * n
        unit = proj / np.linalg.norm(proj, axis=1, keepdims=True)
    unit[near] = np.nan
    return unit, near


def element_frames(mesh: ShellMesh, reference: Sequence[float] = (1.0, 0.0, 0.0),
                   per_cell: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Element frames of every shell cell.

    Parameters
    ----------
    mesh : ShellMesh
        The mesh.
    reference : sequence of 3 floats, default (1, 0, 0)
        Global direction projected on each element to give its x axis.
    per_cell : ndarray, shape (n_cells, 3), optional
        Per-cell reference vectors (e.g. from the mesh file); they replace
        ``reference`` and are projected the same way (same fall-back).

    Returns
    -------
    x, y, n : ndarray, shape (n_cells, 3) each
        Unit vectors in global coordinates; (x, y, n) is right-handed.

    Raises
    ------
    MeshError
        On degenerate cells (zero area or repeated corner nodes), listing how
        many and the first global cell ids; on a zero reference or a bad
        ``per_cell`` shape.
    """
    raw, bad = cell_normals(mesh)
    if bad.any():
        ids = np.flatnonzero(bad)
        raise MeshError(f"{len(ids)} degenerate cell(s) (zero area or repeated corner nodes), "
                        f"global cell ids {', '.join(map(str, ids[:8]))}{' ...' if len(ids) > 8 else ''}; "
                        "repair or remove them", mesh.source or None)
    n = _unit(raw)
    if per_cell is not None:
        ref = np.asarray(per_cell, dtype=np.float64)
        if ref.shape != (mesh.n_cells, 3) or not np.isfinite(ref).all():
            raise MeshError(f"per-cell reference vectors must be finite with shape ({mesh.n_cells}, 3), "
                            f"got {ref.shape}", mesh.source or None)
    else:
        ref = np.asarray(reference, dtype=np.float64)
        if ref.shape != (3,) or not np.any(ref) or not np.isfinite(ref).all():
            raise MeshError(f"reference vector must be 3 finite numbers, not all zero; got {reference!r}")
    x, near = in_plane(ref, n)
    for axis in np.eye(3):
        if not near.any():
            break
        cand, cand_near = in_plane(axis, n[near])
        idx = np.flatnonzero(near)[~cand_near]
        x[idx] = cand[~cand_near]
        near[idx] = False
    y = np.cross(n, x)
    return x, y, n
