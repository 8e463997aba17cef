"""Laminate 0° direction rules and the material angle φ of every cell.

φ (degrees) is measured counter-clockwise about the cell normal from the
element-frame x axis to the laminate x (0°) axis (docs/conventions.md). Each
rule gives a 0° direction per cell, projected on the element plane:

- :class:`Vector` — one global direction.
- :class:`Axis` — an axis line (direction through origin): ``"axial"`` takes
  the axis direction; ``"hoop"`` the circumferential direction
  ``â × r̂``, right-handed about the axis, with r the offset of the cell
  centroid from the axis.
- :class:`Field` — a per-cell angle array of the mesh file, degrees from the
  element x axis (it *is* φ).
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from bridge.definition.orientation import Axis, Field, Vector
from bridge.model.frames import in_plane
from bridge.mesh.shell import ShellMesh
from shells.errors import DefinitionError, MeshError


def wrap_degrees(a: np.ndarray) -> np.ndarray:
    """Angles (degrees) wrapped to (−180, 180]; returns a new array."""
    return 180.0 - np.remainder(180.0 - np.asarray(a, dtype=np.float64), 360.0)


def _global(local: np.ndarray, cells: np.ndarray | None) -> np.ndarray:
    return local if cells is None else np.asarray(cells)[local]


def _cells(ids: np.ndarray) -> str:
    return ", ".join(map(str, ids[:8])) + (" ..." if len(ids) > 8 else "")


def zero_direction(rule: Vector | Axis, mesh: ShellMesh, n: np.ndarray,
                   cells: np.ndarray | None = None) -> np.ndarray:
    """Unit laminate 0° direction per cell, in the element plane; shape (len(n), 3).

    ``n`` holds the unit normals of the global cells ``cells`` (default all).

    Raises
    ------
    DefinitionError
        Where the direction is within 5° of the cell normal (or, for hoop, the
        centroid lies on the axis), naming the rule and the first cells.
    """
    if isinstance(rule, Vector):
        d = np.asarray(rule.direction)
    else:
        a = np.asarray(rule.direction) / np.linalg.norm(rule.direction)
        if rule.mode == "axial":
            d = a
        else:
            cen = mesh.centroids()
            r = (cen if cells is None else cen[cells]) - np.asarray(rule.origin)
            r -= np.outer(r @ a, a)
            d = np.cross(a, r)
            scale = np.linalg.norm(mesh.points.max(0) - mesh.points.min(0))
            on_axis = np.linalg.norm(d, axis=1) <= 1e-9 * max(scale, 1e-300)
            if on_axis.any():
                ids = _global(np.flatnonzero(on_axis), cells)
                raise DefinitionError(f"{rule}: {len(ids)} cell centroid(s) lie on the axis, where hoop "
                                      f"is undefined: global cells {_cells(ids)}; use another rule there")
    unit, near = in_plane(d, n)
    if near.any():
        ids = _global(np.flatnonzero(near), cells)
        raise DefinitionError(f"{rule}: the 0° direction is within 5° of the normal on {len(ids)} cell(s), "
                              f"global cells {_cells(ids)}; choose a direction in the shell's plane "
                              "or another rule for those cells", mesh.source or None)
    return unit


def material_angle(rule: Vector | Axis | Field, mesh: ShellMesh, frames: Sequence[np.ndarray],
                   cells: np.ndarray | None = None) -> np.ndarray:
    """Material angle φ of every cell, degrees in (−180, 180].

    Parameters
    ----------
    rule : Vector, Axis or Field
        The 0° rule.
    mesh : ShellMesh
        The mesh (centroids for hoop, cell arrays for Field).
    frames : (x, y, n)
        Element frames from :func:`bridge.model.frames.element_frames`, over all cells.
    cells : array of int, optional
        Global cell ids to evaluate (e.g. one zone); only these are checked.

    Returns
    -------
    ndarray, shape (n_cells,) or (len(cells),), float64
        φ = atan2(d·y, d·x) for the 0° direction d, counter-clockwise about n.

    Raises
    ------
    DefinitionError
        Direction near the normal, hoop on the axis, unknown rule.
    MeshError
        Field array missing, of the wrong shape or non-finite.
    """
    sel = slice(None) if cells is None else np.asarray(cells, dtype=np.int64)
    x, y, n = (np.asarray(f)[sel] for f in frames)
    if isinstance(rule, Field):
        if rule.name not in mesh.cell_data:
            raise MeshError(f"{rule}: no cell array {rule.name!r}; the mesh has "
                            f"{', '.join(sorted(mesh.cell_data)) or 'no cell arrays'}", mesh.source or None)
        a = np.asarray(mesh.cell_data[rule.name], dtype=np.float64)
        if a.ndim == 2 and a.shape[1] == 1:
            a = a[:, 0]
        if a.shape != (mesh.n_cells,):
            raise MeshError(f"{rule}: array {rule.name!r} has shape {a.shape}; it must hold one angle "
                            f"per cell ({mesh.n_cells},)", mesh.source or None)
        a = a[sel]
        bad = _global(np.flatnonzero(~np.isfinite(a)), cells)
        if bad.size:
            raise MeshError(f"{rule}: non-finite angle on {bad.size} cell(s), global cells {_cells(bad)}",
                            mesh.source or None)
        return wrap_degrees(a)
    if not isinstance(rule, (Vector, Axis)):
        raise DefinitionError(f"unknown orientation rule {rule!r}; use Vector, Axis or Field")
    d = zero_direction(rule, mesh, n, None if cells is None else sel)
    return wrap_degrees(np.degrees(np.arctan2(np.einsum("ij,ij->i", d, y), np.einsum("ij,ij->i", d, x))))
