"""A definition tied to a mesh: per-cell zone, section, frame and material angle.

Sections are built once per distinct (laminate, offset) pair of the zones, in
zone order; a cell's section id is the position in :attr:`Model.sections`. A
zone's offset is its own ``offset``, else its laminate's, else 0
(:func:`bridge.model.sections.zone_offset`).
The definition's ``[frames]`` settings give the element-frame reference
vector (default global X) or name a per-cell vector array of the mesh that
then rules.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from shells.errors import InputError, MeshError
from shells.recovery_tables import SectionTables, build_tables
from shells.section import Section

from bridge.definition.loader import Definition
from bridge.model.frames import element_frames
from bridge.mesh.shell import ShellMesh
from bridge.model.orientation import material_angle
from bridge.model.sections import section_of, zone_offset
from bridge.model.zones import assign_zones


@dataclass(frozen=True)
class Model:
    """Per-cell data of a mesh under a definition (global cell index order).

    Attributes
    ----------
    zone : int64 (ncell,)
        Index into ``defn.zones``.
    section : int64 (ncell,)
        Index into ``sections``.
    phi : float64 (ncell,)
        Material angle, degrees (element x → laminate x, counter-clockwise about the normal).
    frame_x, frame_y, normal : float64 (ncell, 3)
        Element frame in global coordinates.
    sections : tuple of Section
    section_names : tuple of str
        ``laminate`` (the laminate's own offset) or ``laminate@offset`` (a zone's offset) for each section.
    """

    defn: Definition
    mesh: ShellMesh
    zone: np.ndarray
    section: np.ndarray
    phi: np.ndarray
    frame_x: np.ndarray
    frame_y: np.ndarray
    normal: np.ndarray
    sections: tuple[Section, ...]
    section_names: tuple[str, ...]

    @property
    def n_cells(self) -> int:
        return int(self.zone.size)

    def tables(self) -> SectionTables:
        return build_tables(self.sections, self.section_names)

    def nply_of_cell(self) -> np.ndarray:
        return np.array([s.n_rows for s in self.sections], dtype=np.int64)[self.section]


def build_model(defn: Definition, mesh: ShellMesh) -> Model:
    """Zones, frames, material angles and sections of every shell cell."""
    ref, vec_name = defn.frames.reference, defn.frames.vectors
    per_cell = None
    if vec_name is not None:
        if vec_name not in mesh.cell_data:
            raise MeshError(f"frames.vectors: the mesh has no cell array '{vec_name}'; arrays: "
                            f"{', '.join(mesh.cell_data) or '(none)'}", mesh.source)
        per_cell = np.asarray(mesh.cell_data[vec_name], dtype=float).reshape(mesh.n_cells, -1)
        if per_cell.shape[1] != 3:
            raise MeshError(f"frames.vectors: '{vec_name}' has {per_cell.shape[1]} components; it needs 3",
                            mesh.source)
    x, y, n = element_frames(mesh, ref, per_cell)
    zone = assign_zones(defn.zones, mesh.cell_data, mesh.tags, mesh.n_cells, mesh.source)
    phi = np.zeros(mesh.n_cells)
    keys: dict[tuple, int] = {}
    section = np.zeros(mesh.n_cells, dtype=np.int64)
    for k, z in enumerate(defn.zones):
        cells = zone == k
        if cells.any():
            try:
                phi[cells] = material_angle(z.orientation, mesh, (x, y, n), cells=np.flatnonzero(cells))
            except InputError as err:
                raise InputError(f"zones[{k + 1}].orientation: {err.detail}", err.source or mesh.source) from None
        lam, off = z.laminate, zone_offset(defn, z)
        fields = defn.laminates[lam].angle_fields
        if not fields:
            section[cells] = keys.setdefault((lam, off, ()), len(keys))
            continue
        values = field_angles(mesh, fields, np.flatnonzero(cells), k)
        rows, inverse = np.unique(values, axis=0, return_inverse=True)
        ids = [keys.setdefault((lam, off, tuple(zip(fields, map(float, r)))), len(keys)) for r in rows]
        section[cells] = np.asarray(ids, dtype=np.int64)[inverse.reshape(-1)]
    if len(keys) > MAX_SECTIONS:
        raise MeshError(f"the angle fields give {len(keys)} distinct sections, more than {MAX_SECTIONS}; round the "
                        "angle arrays (e.g. to 0.1°) in the mesh", mesh.source)
    sections = tuple(section_of(defn, lam, off, dict(angles) if angles else None) for lam, off, angles in keys)
    names = tuple(_section_name(defn, lam, off, angles) for lam, off, angles in keys)
    return Model(defn, mesh, zone, section, phi, x, y, n, sections, names)


#: Angles read from a mesh field are taken to this many decimals of a degree (0.01°: far below any tolerance of
#: fibre placement; sections are built once per distinct set of angles).
FIELD_DECIMALS = 2
#: Most distinct sections a run builds from angle fields.
MAX_SECTIONS = 5000


def field_angles(mesh: ShellMesh, fields: tuple[str, ...], cells: np.ndarray, k: int) -> np.ndarray:
    """(len(cells), len(fields)) angles (degrees, rounded to :data:`FIELD_DECIMALS`) of the zone's cells."""
    out = np.empty((cells.size, len(fields)))
    for j, name in enumerate(fields):
        if name not in mesh.cell_data:
            raise MeshError(f"zones[{k + 1}]: its laminate takes ply angles from the cell array '{name}', which "
                            f"the mesh lacks; arrays: {', '.join(sorted(mesh.cell_data)) or '(none)'}", mesh.source)
        a = np.asarray(mesh.cell_data[name], dtype=np.float64).reshape(mesh.n_cells, -1)
        if a.shape[1] != 1:
            raise MeshError(f"cell array '{name}' has {a.shape[1]} components; a ply angle field has one (degrees)",
                            mesh.source)
        a = a[cells, 0]
        if not np.isfinite(a).all() or np.abs(a).max(initial=0.0) > 360.0:
            bad = cells[~(np.isfinite(a) & (np.abs(a) <= 360.0))][:5]
            raise MeshError(f"cell array '{name}': angles must be finite degrees within ±360 (cells "
                            f"{', '.join(map(str, bad))})", mesh.source)
        out[:, j] = np.round(a, FIELD_DECIMALS)
    return out


def _section_name(defn: Definition, lam: str, off: float, angles: tuple) -> str:
    """``laminate``, ``laminate@offset`` and, for angle fields, ``laminate[field=value°]``."""
    name = lam if off == defn.laminates[lam].offset else f"{lam}@{off:g}"
    return name + ("[" + ", ".join(f"{f}={v:g}°" for f, v in angles) + "]" if angles else "")


def describe(model: Model) -> Mapping[str, Any]:
    """Counts per zone, for notes on stderr."""
    counts = np.bincount(model.zone, minlength=len(model.defn.zones))
    return {z.name: int(c) for z, c in zip(model.defn.zones, counts)}
