"""The shell mesh model every format reader returns and every writer takes.

A :class:`ShellMesh` holds only shell cells (triangles and quadrilaterals,
linear or quadratic). The **global cell index** runs over the shell cells in
file order, block after block: cell ``i`` of block ``b`` has global index
``sum(len(blocks[j]) for j < b) + i``. Every per-cell array in plybridge
(cell data, frames, material angles, resultants) runs over that index.

Lines, vertices and volume cells are left out with a note in
:attr:`ShellMesh.notes`. A ``quad9`` or ``triangle7`` cell is kept as its
corner-and-mid-side form (``quad8``, ``triangle6``): the centre node is dropped.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping, Sequence

import numpy as np

from shells.errors import MeshError

#: Shell cell types kept, in meshio's names, with their node counts.
CELL_TYPES = ("triangle", "quad", "triangle6", "quad8")
NODES_PER_CELL = {"triangle": 3, "quad": 4, "triangle6": 6, "quad8": 8}
CORNERS_PER_CELL = {"triangle": 3, "quad": 4, "triangle6": 3, "quad8": 4}
#: Types kept in a reduced form: name -> (kept type, nodes kept).
REDUCED_TYPES = {"triangle7": ("triangle6", 6), "quad9": ("quad8", 8)}


def _frozen(a: np.ndarray) -> np.ndarray:
    a.flags.writeable = False
    return a


@dataclass(frozen=True)
class ShellMesh:
    """Shell cells of a finite-element mesh.

    Parameters
    ----------
    points : ndarray, shape (n_points, 3), float64
        Node coordinates in the model's length unit. Two-column input gets z = 0.
    blocks : tuple of (str, ndarray)
        ``(cell_type, connectivity)`` per block, ``cell_type`` in
        :data:`CELL_TYPES`, connectivity int64 of shape (k, nodes) with 0-based
        node indices in meshio's node order (corners counter-clockwise, then
        mid-side nodes).
    cell_data : dict of str to ndarray
        Per-cell arrays; the first axis runs over the global cell index.
    tags : dict of str to dict of str to int
        Named tag sets, e.g. ``tags["gmsh:physical"] = {"skin": 3}``.
    source : str
        The file the mesh came from ("" when built in memory).
    notes : tuple of str
        What the reader left out or changed, one sentence each.

    Notes
    -----
    The constructor copies every array and makes the copies read-only, so a
    mesh never aliases or changes its caller's arrays.
    """

    points: np.ndarray
    blocks: tuple
    cell_data: dict = field(default_factory=dict)
    tags: dict = field(default_factory=dict)
    source: str = ""
    notes: tuple = ()

    def __post_init__(self):
        src = self.source or None
        pts = np.array(self.points, dtype=np.float64)
        if pts.ndim != 2 or pts.shape[1] not in (2, 3):
            raise MeshError(f"points must have shape (n, 3), got {pts.shape}", src)
        if pts.shape[1] == 2:
            pts = np.column_stack([pts, np.zeros(len(pts))])
        blocks = []
        for cell_type, conn in self.blocks:
            if cell_type not in NODES_PER_CELL:
                raise MeshError(
                    f"cell type {cell_type!r} is not a shell type; use one of {', '.join(CELL_TYPES)}",
                    src)
            c = np.array(conn, dtype=np.int64)
            if c.ndim != 2 or c.shape[1] != NODES_PER_CELL[cell_type]:
                raise MeshError(f"{cell_type} connectivity must have shape (k, "
                                f"{NODES_PER_CELL[cell_type]}), got {c.shape}", src)
            if c.size and (c.min() < 0 or c.max() >= len(pts)):
                raise MeshError(f"{cell_type} connectivity refers to nodes outside 0..{len(pts) - 1}; "
                                "check the node numbering of the file", src)
            blocks.append((cell_type, _frozen(c)))
        _check_coordinates(pts, blocks, src)
        n = sum(len(c) for _, c in blocks)
        data = {}
        for name, arr in self.cell_data.items():
            a = np.array(arr)
            if a.ndim == 0 or a.shape[0] != n:
                raise MeshError(f"cell data {name!r} has {a.shape[0] if a.ndim else 0} rows "
                                f"for {n} shell cells", src)
            data[str(name)] = _frozen(a)
        tags = {str(k): {str(a): int(b) for a, b in v.items()} for k, v in self.tags.items()}
        object.__setattr__(self, "points", _frozen(pts))
        object.__setattr__(self, "blocks", tuple(blocks))
        object.__setattr__(self, "cell_data", data)
        object.__setattr__(self, "tags", tags)
        object.__setattr__(self, "notes", tuple(str(s) for s in self.notes))

    @property
    def n_cells(self) -> int:
        """Number of shell cells (length of the global cell index)."""
        return int(sum(len(c) for _, c in self.blocks))

    def block_offsets(self) -> np.ndarray:
        """Global index of each block's first cell, plus the total at the end; shape (n_blocks + 1,)."""
        return np.concatenate([[0], np.cumsum([len(c) for _, c in self.blocks])]).astype(np.int64)

    def cell_type_of(self) -> np.ndarray:
        """Per-cell type as an index into :data:`CELL_TYPES`; shape (n_cells,), int64."""
        parts = [np.full(len(c), CELL_TYPES.index(t), np.int64) for t, c in self.blocks]
        return np.concatenate(parts) if parts else np.zeros(0, np.int64)

    def corners(self) -> list[np.ndarray]:
        """Corner connectivity per block: the first 3 (triangles) or 4 (quads) nodes of each cell."""
        return [c[:, :CORNERS_PER_CELL[t]] for t, c in self.blocks]

    def centroids(self) -> np.ndarray:
        """Mean of each cell's corner nodes; shape (n_cells, 3), length unit of the mesh.

        For a quadrilateral this is the point at the parametric centre of the
        bilinear cell, which is what solvers report as the element centre.
        """
        parts = [self.points[c].mean(axis=1) for c in self.corners()]
        return np.concatenate(parts) if parts else np.zeros((0, 3))

    def with_cell_data(self, cell_data: Mapping[str, np.ndarray]) -> "ShellMesh":
        """Return a copy of the mesh with ``cell_data`` added to (or replacing) its arrays."""
        merged = dict(self.cell_data)
        merged.update(cell_data)
        return ShellMesh(self.points, self.blocks, merged, self.tags, self.source, self.notes)


#: Largest node coordinate in magnitude (common practice: no shell model spans 1e15 length units in any unit
#: system; beyond it products of coordinates lose all precision and overflow).
MAX_COORDINATE = 1e15


def _check_coordinates(points: np.ndarray, blocks, src: str | None) -> None:
    """Refuse non-finite or absurdly large coordinates of the nodes the cells use."""
    if not points.size:
        return
    bad = ~(np.abs(points) <= MAX_COORDINATE).all(axis=1)
    if not bad.any():
        return
    used = np.zeros(len(points), dtype=bool)
    for _, c in blocks:
        used[c.ravel()] = True
    ids = np.flatnonzero(bad & used)
    if ids.size:
        raise MeshError(f"{ids.size} node(s) used by cells have non-finite coordinates or coordinates beyond "
                        f"±{MAX_COORDINATE:g} (node {ids[0]} at {tuple(float(v) for v in points[ids[0]])}"
                        f"{', …' if ids.size > 1 else ''}); fix the node coordinates or the export's length unit",
                        src)


def _describe(counts: Mapping[str, int]) -> str:
    return ", ".join(f"{n} {t}" for t, n in counts.items()) or "no cells"


def shell_mesh_from_blocks(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]],
                           block_data: Mapping[str, Sequence[Any]] | None = None,
                           tags: Mapping[str, Mapping[str, int]] | None = None,
                           source: str = "", notes: Sequence[str] = ()) -> ShellMesh:
    """Keep the shell blocks of a general mesh and build a :class:`ShellMesh`.

    Parameters
    ----------
    points : ndarray, shape (n, 2 or 3)
        Node coordinates.
    blocks : sequence of (str, ndarray)
        Every cell block of the file in file order, meshio cell type names.
    block_data : dict of str to list of ndarray, optional
        Cell data as one array per block of ``blocks`` (meshio's layout).
        Arrays whose list length does not match the blocks are skipped with a note.
    tags, source, notes
        As in :class:`ShellMesh`.

    Raises
    ------
    MeshError
        If no block is a shell type; the message lists what the file has.
    """
    notes = list(notes)
    kept, keep_idx, skipped = [], [], {}
    for i, (cell_type, conn) in enumerate(blocks):
        conn = np.asarray(conn)
        if cell_type in NODES_PER_CELL:
            kept.append((cell_type, conn))
        elif cell_type in REDUCED_TYPES:
            new_type, k = REDUCED_TYPES[cell_type]
            kept.append((new_type, conn[:, :k]))
            notes.append(f"read {len(conn)} {cell_type} cells as {new_type} (centre node dropped)")
        else:
            skipped[cell_type] = skipped.get(cell_type, 0) + len(conn)
            continue
        keep_idx.append(i)
    if not kept:
        raise MeshError(f"no shell cells (triangle, quad, triangle6, quad8) found; the file has "
                        f"{_describe(skipped)}. Export the shell elements of the model", source or None)
    notes.extend(f"skipped {n} {t} cells (plybridge analyses shell cells only; check those separately)"
                 for t, n in skipped.items())
    cell_data = {}
    for name, arrays in (block_data or {}).items():
        if len(arrays) != len(blocks):
            notes.append(f"skipped cell data {name!r}: given for {len(arrays)} of {len(blocks)} blocks")
            continue
        parts = [np.asarray(arrays[i]) for i in keep_idx]
        if len({p.shape[1:] for p in parts}) != 1:
            notes.append(f"skipped cell data {name!r}: component counts differ between blocks")
            continue
        cell_data[name] = np.concatenate(parts)
    return ShellMesh(points, tuple(kept), cell_data, dict(tags or {}), source, tuple(notes))


def from_meshio(m: Any, source: str = "") -> ShellMesh:
    """Adapt a ``meshio.Mesh`` (duck-typed: points, cells, cell_data, field_data).

    Gmsh physical names (``field_data`` name -> [tag, dim]) of dimension 2
    become ``tags["gmsh:physical"]`` (name -> tag); ``cell_data["gmsh:physical"]``
    comes through as cell data over the global cell index.
    """
    blocks = [(c.type, c.data) for c in m.cells]
    tags, notes = {}, []
    phys = {}
    for name, value in (getattr(m, "field_data", None) or {}).items():
        v = np.asarray(value).ravel()
        if len(v) == 2 and int(v[1]) == 2:
            phys[name] = int(v[0])
        elif len(v) == 2:
            notes.append(f"ignored physical name {name!r} of dimension {int(v[1])}")
    if phys:
        tags["gmsh:physical"] = phys
    return shell_mesh_from_blocks(m.points, blocks, m.cell_data, tags, source, notes)


def read_with_meshio(path: str, file_format: str | None = None) -> ShellMesh:
    """Read ``path`` with meshio (the one place plybridge calls ``meshio.read``).

    Raises
    ------
    MeshError
        If the file is missing or meshio cannot parse it; the message keeps
        meshio's reason.
    """
    import meshio

    import contextlib
    import io

    src = str(path)
    _check_hdf5(src)
    chatter = io.StringIO()
    try:
        # meshio prints and calls sys.exit on some unreadable files: keep both inside.
        with contextlib.redirect_stdout(chatter), contextlib.redirect_stderr(chatter):
            m = meshio.read(src, file_format=file_format)
    except FileNotFoundError:
        raise MeshError("file not found; check the path", src) from None
    except (Exception, SystemExit) as exc:  # meshio raises ReadError, ValueError, KeyError, SystemExit ...
        reason = " ".join((str(exc) if not isinstance(exc, SystemExit) else chatter.getvalue()).split())[:300]
        raise MeshError(f"cannot read as {file_format or 'a meshio format'}: "
                        f"{type(exc).__name__}: {reason or 'no reason given'}; check the file is complete and "
                        "of that format", src) from None
    return from_meshio(m, src)


def _check_hdf5(path: str) -> None:
    """HDF5-based formats (MED, CGNS, H5M, XDMF heavy data) follow the loading rules before meshio reads them."""
    from bridge.mesh.h5_rules import HDF5_SIGNATURE, open_h5

    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
    except OSError:
        return  # meshio reports a missing file
    if head == HDF5_SIGNATURE:
        with open_h5(path, MeshError):
            pass


def flatten_cell_data(cell_data: Mapping[str, np.ndarray], n_cells: int,
                      where: str = "") -> dict[str, np.ndarray]:
    """Check per-cell arrays and flatten (n, k, m, ...) to (n, k·m·...) in C order.

    Raises
    ------
    MeshError
        If an array's first axis is not ``n_cells`` long.
    """
    out = {}
    for name, arr in cell_data.items():
        a = np.asarray(arr)
        if a.ndim == 0 or a.shape[0] != n_cells:
            raise MeshError(f"cell data {name!r} has {a.shape[0] if a.ndim else 0} rows for "
                            f"{n_cells} cells; give one row per global cell", where or None)
        out[name] = a.reshape(n_cells, -1) if a.ndim > 2 else a
    return out


def to_meshio(mesh: ShellMesh, cell_data: Mapping[str, np.ndarray] | None = None):
    """Build a ``meshio.Mesh`` with the mesh's blocks and global-cell data split per block."""
    import meshio

    data = flatten_cell_data({**mesh.cell_data, **(cell_data or {})}, mesh.n_cells)
    off = mesh.block_offsets()
    per_block = {k: [np.ascontiguousarray(v[off[i]:off[i + 1]]) for i in range(len(mesh.blocks))]
                 for k, v in data.items()}
    field_data = {name: np.array([tag, 2]) for name, tag in mesh.tags.get("gmsh:physical", {}).items()}
    return meshio.Mesh(np.array(mesh.points), [(t, np.array(c)) for t, c in mesh.blocks],
                       cell_data=per_block, field_data=field_data)
