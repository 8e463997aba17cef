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
        return np.array([s.n_plies for s in self.sections], dtype=np.int64)[self.section]


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
    keys: dict[tuple[str, float], int] = {}
    section_of_zone = []
    for k, z in enumerate(defn.zones):
        cells = zone == k
        if cells.any():
            try:
                phi[cells] = material_angle(z.orientation, mesh, (x, y, n), cells=np.flatnonzero(cells))
            except InputError as err:
                raise InputError(f"zones[{k + 1}].orientation: {err.detail}", err.source or mesh.source) from None
        section_of_zone.append(keys.setdefault((z.laminate, zone_offset(defn, z)), len(keys)))
    sections = tuple(section_of(defn, lam, off) for lam, off in keys)
    names = tuple(lam if off == defn.laminates[lam].offset else f"{lam}@{off:g}" for lam, off in keys)
    return Model(defn, mesh, zone, np.asarray(section_of_zone, dtype=np.int64)[zone], phi, x, y, n,
                 sections, names)


def describe(model: Model) -> Mapping[str, Any]:
    """Counts per zone, for notes on stderr."""
    counts = np.bincount(model.zone, minlength=len(model.defn.zones))
    return {z.name: int(c) for z, c in zip(model.defn.zones, counts)}
