"""Fields of a results store as named cell arrays of a mesh file, for any VTK-based viewer (docs/fields.md).

Per-cell fields are one array each; per-ply fields are one array per ply (``margin_ply01`` …), so a viewer
shows any ply without the store. A field list names what to write: envelope fields (``margin``,
``strength_ratio``, ``case``, ``criterion``, ``mode``, ``point`` per ply) and ply stress or strain components
(:mod:`shells.components`) at a chosen point of the ply (``sigma1@top``; default the ply's governing point),
in the ply's governing case (components need ``recover --store plies``).
"""

from __future__ import annotations

import numpy as np

from shells.components import ALL, check_component
from shells.errors import InputError

from bridge.mesh.formats import write_mesh
from bridge.results.components import component_states
from bridge.mesh.shell import shell_mesh_from_blocks
from bridge.results.store import StoreReader

#: Per-cell fields (one array each).
CELL_FIELDS = ("min_margin", "critical_ply", "strength_ratio", "case", "criterion", "mode", "point", "flagged", "zone")
#: Per-ply envelope fields (one array per ply): field → dataset under /envelope.
PLY_FIELDS = {"margin": "margin", "strength_ratio": "strength_ratio", "ply_case": "case",
              "ply_criterion": "criterion", "ply_mode": "mode", "ply_point": "point"}
POINTS = ("bottom", "middle", "top")
#: Written when no list is given.
DEFAULT_FIELDS = CELL_FIELDS + ("margin",)


class ViewFieldError(InputError):
    """A --view-fields entry the store cannot answer."""


def parse_fields(text: str | None) -> tuple[str, ...]:
    """``"min_margin,margin,sigma1@top"`` → the entries, checked (retired component names get a pointer)."""
    if text is None:
        return DEFAULT_FIELDS
    entries = tuple(e.strip() for e in text.split(",") if e.strip())
    if not entries:
        raise ViewFieldError("--view-fields is empty; give names such as min_margin,margin,sigma1@top")
    for entry in entries:
        name, _, point = entry.partition("@")
        if name in CELL_FIELDS or name in PLY_FIELDS:
            if point:
                raise ViewFieldError(f"--view-fields {entry!r}: only ply components take a point (@{point})")
            continue
        check_component(name, "--view-fields", ALL + CELL_FIELDS + tuple(PLY_FIELDS))
        if point and point not in POINTS:
            raise ViewFieldError(f"--view-fields {entry!r}: the point is one of {', '.join(POINTS)}")
    return entries


def needs_plies(entries) -> bool:
    """Whether any entry is a ply component (those need ``/plies``)."""
    return any(e.partition("@")[0] not in CELL_FIELDS and e.partition("@")[0] not in PLY_FIELDS for e in entries)


def _per_ply(name: str, data: np.ndarray, nply: int) -> dict[str, np.ndarray]:
    return {f"{name}_ply{k + 1:02d}": np.ascontiguousarray(data[:, k]) for k in range(nply)}


def _component(st: StoreReader, entry: str) -> dict[str, np.ndarray]:
    if not st.has("plies"):
        raise ViewFieldError(f"--view-fields {entry}: ply components need /plies; run plybridge recover with "
                             "--store plies", st.path)
    name, _, point = entry.partition("@")
    n, mp = st.h5["envelope/margin"].shape
    out = {}
    for k in range(mp):
        case = st.h5["envelope/case"][:, k]
        through = component_states(st, name, np.full(n, k), case)
        p = np.full(n, POINTS.index(point)) if point else st.h5["envelope/point"][:, k]
        ok = (case >= 0) & (p >= 0)
        out[f"{name}{'_' + point if point else ''}_ply{k + 1:02d}"] = np.where(
            ok, through[np.arange(n), np.maximum(p, 0)], np.nan)
    return out


def view_fields(st: StoreReader, entries=DEFAULT_FIELDS) -> dict[str, np.ndarray]:
    """The named cell arrays of the entries (see the module notes)."""
    out: dict[str, np.ndarray] = {}
    mp = st.h5["envelope/margin"].shape[1]
    for entry in entries:
        if entry == "zone":
            out["zone"] = st.array("model/zone")
        elif entry == "flagged":
            out["flagged"] = st.array("cells/flagged").astype(np.int8)
        elif entry in CELL_FIELDS:
            out[entry] = st.array(f"cells/{entry}")
        elif entry in PLY_FIELDS:
            out.update(_per_ply(entry, st.array(f"envelope/{PLY_FIELDS[entry]}"), mp))
        else:
            out.update(_component(st, entry))
    return out


def write_view(store_path: str, view_path: str, entries=DEFAULT_FIELDS) -> list[str]:
    """Write the mesh of a store with the chosen fields as cell data; returns the array names written."""
    with StoreReader(store_path) as st:
        points, blocks = st.mesh()
        fields = view_fields(st, entries)
    write_mesh(view_path, shell_mesh_from_blocks(points, blocks), fields)
    return list(fields)
