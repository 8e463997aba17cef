"""Envelope fields of a results store as cell data of a mesh file, for any VTK-based viewer."""

from __future__ import annotations

import numpy as np

from bridge.mesh.formats import write_mesh
from bridge.mesh.shell import shell_mesh_from_blocks
from bridge.results.store import StoreReader

VIEW_FIELDS = ("min_margin", "critical_ply", "strength_ratio", "case", "criterion", "mode", "point", "flagged")


def view_fields(st: StoreReader) -> dict[str, np.ndarray]:
    """Cell arrays of the envelope: per cell and, as multi-component arrays, per ply."""
    out = {name: st.array(f"cells/{name}") for name in VIEW_FIELDS}
    out["flagged"] = out["flagged"].astype(np.int8)
    out["zone"] = st.array("model/zone")
    out["ply_margin"] = st.array("envelope/margin")
    out["ply_strength_ratio"] = st.array("envelope/strength_ratio")
    return out


def write_view(store_path: str, view_path: str) -> None:
    with StoreReader(store_path) as st:
        points, blocks = st.mesh()
        fields = view_fields(st)
    mesh = shell_mesh_from_blocks(points, blocks)
    write_mesh(view_path, mesh, fields)
