"""XDMF 3 (``.xdmf``/``.xmf``): our own writer and reader (XML + HDF5 via h5py).

Layout written
--------------
- The heavy data go to ``<stem>.h5`` beside the XML file: ``/mesh/points`` (n, 3) float64, ``/mesh/topology``
  and one dataset per cell array, chunked (about 65536 rows) with shuffle + gzip. Datasets are numbered; the
  XML carries the array names.
- A mesh whose cells are all of one type gets that XDMF topology (``Triangle``, ``Quadrilateral``,
  ``Triangle_6``, ``Quadrilateral_8``); several types get one ``Mixed`` topology (each cell's XDMF type number
  followed by its nodes), in global-cell order.
- A time series is a ``Temporal`` collection of grids, one per step, each with ``<Time Value=i>`` and
  ``<Information Name="case" Value=...>``; all steps share the mesh datasets.
- The .h5 is written first, then the XML; both are replaced atomically. An existing ``<stem>.h5`` is replaced
  only when it is the heavy data of the XDMF file being replaced (:func:`check_companion`).

Cell arrays are written so that VTK's XDMF reader sees their true component
count (1: ``Scalar``; 2: ``Matrix`` (n, 1, 2); more: ``Vector``), meshio and our
reader give (n, k); meshio cannot read a ``Mixed`` topology with quadratic cells.
Reading follows XInclude references within the file (:mod:`bridge.mesh.xinclude`).
"""

from __future__ import annotations

import os
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from bridge.atomic import atomic_h5, atomic_path
from bridge.mesh import h5_rules
from bridge.mesh.lazy import LazyH5
from bridge.mesh.mixed import split_mixed as _split_mixed
from bridge.mesh.shell import NODES_PER_CELL, ShellMesh, flatten_cell_data, shell_mesh_from_blocks
from shells.errors import MeshError

name = "xdmf"
extensions = (".xdmf", ".xmf")
can_write = True

TOPOLOGY = {"triangle": "Triangle", "quad": "Quadrilateral", "triangle6": "Triangle_6",
            "quad8": "Quadrilateral_8"}
_TOPOLOGY_IN = {"Triangle": "triangle", "Quadrilateral": "quad", "Triangle_6": "triangle6",
                "Tri_6": "triangle6", "Quadrilateral_8": "quad8", "Quad_8": "quad8",
                "Quadrilateral_9": "quad9", "Quad_9": "quad9", "Polyline": "line", "Polyvertex": "vertex",
                "Tetrahedron": "tetra", "Hexahedron": "hexahedron", "Wedge": "wedge", "Pyramid": "pyramid"}
_MIXED_OUT = {"triangle": 4, "quad": 5, "triangle6": 0x24, "quad8": 0x25}
_DTYPES = {("Float", "4"): np.float32, ("Float", "8"): np.float64, ("Int", "1"): np.int8,
           ("Int", "2"): np.int16, ("Int", "4"): np.int32, ("Int", "8"): np.int64,
           ("UInt", "1"): np.uint8, ("UInt", "2"): np.uint16, ("UInt", "4"): np.uint32,
           ("UInt", "8"): np.uint64, ("Char", "1"): np.int8, ("UChar", "1"): np.uint8}
CHUNK_ROWS = 65536


def sniff(head: bytes) -> bool:
    """True when the first bytes hold an ``<Xdmf`` root element."""
    return b"<Xdmf" in head


@dataclass(frozen=True)
class Step:
    """One grid of a temporal collection: its name, time value and cell arrays (global cells)."""

    name: str
    time: float | None
    cell_data: dict


# ----------------------------------------------------------------------------- writing

def _attr_type(a: np.ndarray) -> str:
    """Scalar (1 component), Matrix of shape (n, 1, 2) (2), Vector (3 or more): as VTK's reader takes them."""
    k = 1 if a.ndim == 1 else a.shape[1]
    return {1: "Scalar", 2: "Matrix"}.get(k, "Vector")


def _number_type(a: np.ndarray) -> tuple[str, str]:
    kind = {"f": "Float", "i": "Int", "u": "UInt"}.get(a.dtype.kind)
    if kind is None:
        raise MeshError(f"cannot write an array of dtype {a.dtype} to XDMF; give numbers")
    return kind, str(a.dtype.itemsize)


class _H5Writer:
    """Adds chunked, compressed datasets to an open h5py file and returns their XML DataItems."""

    def __init__(self, h5, h5name: str):
        self.h5, self.h5name = h5, h5name

    def item(self, path: str, a: np.ndarray) -> ET.Element:
        a = np.ascontiguousarray(a.astype(np.int8) if a.dtype == bool else a)
        kind, prec = _number_type(a)
        chunks = (min(len(a), CHUNK_ROWS if a.ndim > 1 else 4 * CHUNK_ROWS),) + a.shape[1:]
        if path not in self.h5:
            self.h5.create_dataset(path, data=a, chunks=chunks if a.size else None,
                                   compression="gzip", compression_opts=4, shuffle=True)
        el = ET.Element("DataItem", DataType=kind, Precision=prec, Format="HDF",
                        Dimensions=" ".join(str(d) for d in a.shape))
        el.text = f"{self.h5name}:{path}"
        return el


def _topology(mesh: ShellMesh, w: _H5Writer) -> ET.Element:
    types = {t for t, _ in mesh.blocks}
    if len(types) == 1:
        t = types.pop()
        conn = np.concatenate([c for _, c in mesh.blocks])
        el = ET.Element("Topology", TopologyType=TOPOLOGY[t], NumberOfElements=str(len(conn)),
                        NodesPerElement=str(NODES_PER_CELL[t]))
        el.append(w.item("/mesh/topology", conn))
        return el
    flat = np.concatenate([np.column_stack([np.full(len(c), _MIXED_OUT[t], np.int64), c]).ravel()
                           for t, c in mesh.blocks])
    el = ET.Element("Topology", TopologyType="Mixed", NumberOfElements=str(mesh.n_cells))
    el.append(w.item("/mesh/topology", flat))
    return el


def _grid(mesh: ShellMesh, w: _H5Writer, data: Mapping[str, np.ndarray], group: str,
          grid_name: str) -> ET.Element:
    grid = ET.Element("Grid", Name=grid_name, GridType="Uniform")
    grid.append(_topology(mesh, w))
    geo = ET.SubElement(grid, "Geometry", GeometryType="XYZ")
    geo.append(w.item("/mesh/points", np.asarray(mesh.points)))
    for i, (key, arr) in enumerate(data.items()):
        a = np.asarray(arr)
        if a.ndim == 2 and a.shape[1] == 1:
            a = a[:, 0]
        att = ET.SubElement(grid, "Attribute", Name=key, AttributeType=_attr_type(a), Center="Cell")
        att.append(w.item(f"{group}/{i}", a[:, None, :] if a.ndim == 2 and a.shape[1] == 2 else a))
    return grid


def _write_xml(path: Path, grids: Sequence[ET.Element], temporal: bool) -> None:
    """Write the XML to ``path`` (a temporary file of :func:`_write`)."""
    root = ET.Element("Xdmf", Version="3.0")
    domain = ET.SubElement(root, "Domain")
    if temporal:
        coll = ET.SubElement(domain, "Grid", Name="steps", GridType="Collection", CollectionType="Temporal")
        coll.extend(grids)
    else:
        domain.extend(grids)
    ET.indent(root)
    path.write_text('<?xml version="1.0"?>\n' + ET.tostring(root, encoding="unicode") + "\n", encoding="utf-8")


def write_series(path: str | os.PathLike, mesh: ShellMesh,
                 steps: Sequence[tuple[str, Mapping[str, np.ndarray]]]) -> None:
    """Write a temporal collection, one grid per ``(step name, cell data)`` item.

    Parameters
    ----------
    path : path-like
        Target XML file; the data go to ``<stem>.h5`` beside it.
    mesh : ShellMesh
        The mesh, shared by every step.
    steps : sequence of (str, dict of str to ndarray)
        Step name (written as ``<Information Name="case">``; the time value
        is the step's 0-based position) and its cell arrays over global cells.
    """
    _write(Path(path), mesh, [(s, dict(d)) for s, d in steps], temporal=True)


def write(path: str | os.PathLike, mesh: ShellMesh, cell_data: Mapping[str, np.ndarray] | None = None) -> None:
    """Write ``mesh`` and ``cell_data`` (over global cells) as one XDMF 3 grid; see the module notes."""
    _write(Path(path), mesh, [("mesh", {**mesh.cell_data, **(cell_data or {})})], temporal=False)


def check_companion(path: str | os.PathLike) -> None:
    """Refuse to write the XDMF pair ``path`` + ``<stem>.h5`` when ``<stem>.h5`` exists and is not the heavy data
    of the XDMF file being replaced (:func:`bridge.mesh.h5_rules.is_xdmf_companion`): it is someone else's file.

    Raises
    ------
    MeshError
        Naming the existing ``.h5`` and the fix.
    """
    path = Path(path)
    h5path = path.with_suffix(".h5")
    if os.path.lexists(h5path) and not h5_rules.is_xdmf_companion(path, h5path):
        raise MeshError(f"the XDMF output {path} writes its data to {h5path.name} beside it, and {h5path.name} "
                        f"exists but is not the heavy data of an existing {path.name} (another file that would be "
                        f"lost); choose another output name or move {h5path.name} away", str(h5path))


def _write(path: Path, mesh: ShellMesh, steps, temporal: bool) -> None:
    h5path = path.with_suffix(".h5")
    if ":" in h5path.name:
        raise MeshError("XDMF data file names must not contain ':'; rename the target", str(path))
    check_companion(path)
    steps = [(s, flatten_cell_data(d, mesh.n_cells, str(path))) for s, d in steps]
    grids = []
    # Both files or neither: the XML is written to its temporary file before the .h5 is renamed, and renamed
    # after it, so a failure at any point leaves the previous pair as it was.
    with atomic_path(path) as xml_tmp:
        with atomic_h5(h5path) as h5:
            w = _H5Writer(h5, h5path.name)
            for k, (step_name, data) in enumerate(steps):
                g = _grid(mesh, w, data, f"/step{k}" if temporal else "/cell_data", str(step_name))
                if temporal:
                    g.insert(0, ET.Element("Information", Name="case", Value=str(step_name)))
                    g.insert(0, ET.Element("Time", Value=str(k)))
                grids.append(g)
            _write_xml(xml_tmp, grids, temporal)


# ----------------------------------------------------------------------------- reading

class _Unsupported(Exception):
    """A construct our reader does not handle (the mesh reader then falls back to meshio)."""


class _Reader:
    def __init__(self, path: str):
        self.path = path
        self.folder = Path(path).resolve().parent
        try:
            h5_rules.check_prolog(path)
            self.root = ET.parse(path).getroot()
        except FileNotFoundError:
            raise MeshError("file not found; check the path", path) from None
        except ET.ParseError as exc:
            raise MeshError(f"not well-formed XML ({exc}); the file may be truncated", path) from None
        if self.root.tag != "Xdmf":
            raise MeshError(f"root element is <{self.root.tag}>, not <Xdmf>", path)
        h5_rules.check_xdmf(path, self.root)  # before any include or data file is read
        from bridge.mesh.xinclude import resolve_includes

        resolve_includes(self.root, path)

    def data(self, item: ET.Element | None, lazy: bool = False) -> np.ndarray:
        if item is None:
            raise MeshError("an element has no DataItem", self.path)
        if item.get("Reference"):
            ref = (item.text or "").strip() if item.get("Reference") == "XML" else item.get("Reference")
            target = self.root.find("." + ref[len("/Xdmf"):]) if ref.startswith("/Xdmf") else None
            if target is None:
                raise _Unsupported(f"reference {ref!r}")
            return self.data(target, lazy)
        if item.get("ItemType", "Uniform") != "Uniform":
            raise _Unsupported(f"DataItem ItemType {item.get('ItemType')}")
        dims = h5_rules.dimensions(item, self.path)
        key = (item.get("DataType", item.get("NumberType", "Float")), item.get("Precision", "4"))
        fmt = item.get("Format", "XML")
        text = (item.text or "").strip()
        if fmt == "XML":
            dtype = _DTYPES.get(key, np.float64)
            try:
                a = np.array(text.split(), dtype=dtype) if text else np.zeros(0, dtype)
            except (ValueError, OverflowError):
                raise MeshError(f"DataItem {item.get('Name') or text[:40]!r}: values that are not {key[0]} "
                                "numbers; fix the XDMF file", self.path) from None
        elif fmt == "HDF":
            a = self._hdf(text, lazy, tuple(dims))
            if isinstance(a, LazyH5):
                return a if tuple(dims) in ((), a.shape, a.shape[:1] + (1,) + a.shape[1:]) else a.eager(dims)
        else:
            raise _Unsupported(f"DataItem Format {fmt}")
        if dims and int(np.prod(dims, dtype=np.int64)) != a.size:
            raise MeshError(f"DataItem {item.get('Name') or text[:40]!r}: Dimensions {' '.join(map(str, dims))} "
                            f"do not match its {a.size} values; fix the XDMF file", self.path)
        return a.reshape(dims) if dims else a

    def _hdf(self, text: str, lazy: bool = False, dims: tuple = ()) -> np.ndarray:
        """``FILE.h5:/dataset`` under the loading rules (h5_rules): read now, or left in its file (``lazy``)."""
        full, name, shape, data = h5_rules.heavy(self.path, text, dims, read=not lazy)
        return LazyH5(str(full), name, shape) if lazy else data

    def grids(self) -> list[ET.Element]:
        """Uniform grids in document order (the members of collections, flattened)."""
        domain = self.root.find("Domain")
        out = []

        def walk(g):
            if g.get("GridType", "Uniform") == "Collection":
                for child in g.findall("Grid"):
                    walk(child)
            else:
                out.append(g)
        tops = domain.findall("Grid") if domain is not None else []
        if any(g.get("GridType") == "Collection" for g in tops):   # shared mesh grids outside are not steps
            tops = [g for g in tops if g.get("GridType") == "Collection"]
        for g in tops:
            walk(g)
        if not out:
            raise MeshError("no <Grid> in the <Domain>", self.path)
        return out

    def cells(self, grid: ET.Element) -> list[tuple[str, np.ndarray]]:
        topo = grid.find("Topology")
        if topo is None:
            raise MeshError(f"grid {grid.get('Name', '')!r} has no <Topology>", self.path)
        ttype = topo.get("TopologyType", topo.get("Type", ""))
        data = self.data(topo.find("DataItem")).astype(np.int64)
        if ttype == "Mixed":
            return _split_mixed(data.ravel(), self.path)
        if ttype not in _TOPOLOGY_IN:
            raise _Unsupported(f"topology {ttype}")
        npe = int(topo.get("NodesPerElement", data.shape[-1] if data.ndim == 2 else 1))
        return [(_TOPOLOGY_IN[ttype], data.reshape(-1, npe))]

    def points(self, grid: ET.Element) -> np.ndarray:
        geo = grid.find("Geometry")
        gtype = geo.get("GeometryType", geo.get("Type", "XYZ")) if geo is not None else ""
        if gtype in ("XYZ", "XY"):
            p = self.data(geo.find("DataItem")).astype(np.float64)
            return p.reshape(-1, len(gtype))
        if gtype in ("X_Y_Z", "X_Y"):
            return np.column_stack([self.data(d).ravel() for d in geo.findall("DataItem")]).astype(np.float64)
        raise _Unsupported(f"geometry {gtype!r}")

    def cell_arrays(self, grid: ET.Element, lazy: bool = False, n: int | None = None) -> dict[str, np.ndarray]:
        """The grid's cell arrays; with ``n`` (its cell count) an array of another row count is refused."""
        out = {}
        for i, a in enumerate(grid.findall("Attribute")):
            if a.get("Center", "Node") == "Cell":
                d, name, item = self.data(a.find("DataItem"), lazy), a.get("Name", f"array{i}"), a.find("DataItem")
                if n is not None and (rows := d.shape[0] if d.ndim else 1) != n:
                    raise MeshError(f"cell array {name!r}: Dimensions=\"{item.get('Dimensions')}\" give {rows} rows but "
                                    f"the grid has {n} cells (one row per cell); fix its Dimensions", self.path)
                out[name] = d[:, 0] if d.ndim == 3 and d.shape[1] == 1 else d
        return out


def _per_block(arrays: Mapping[str, np.ndarray], blocks) -> dict[str, list[np.ndarray]]:
    off = np.concatenate([[0], np.cumsum([len(c) for _, c in blocks])])
    return {k: [a[off[i]:off[i + 1]] for i in range(len(blocks))] for k, a in arrays.items()}


def _mesh_of(reader: _Reader, grid: ET.Element, with_data: bool = True) -> ShellMesh:
    blocks = reader.cells(grid)
    data = _per_block(reader.cell_arrays(grid, n=sum(len(c) for _, c in blocks)), blocks) if with_data else {}
    return shell_mesh_from_blocks(reader.points(grid), blocks, data, source=reader.path)


def read(path: str | os.PathLike) -> ShellMesh:
    """Read the mesh (and cell arrays) of the first grid of an XDMF file.

    Constructs our reader does not handle (hyperslabs, functions, XPath
    references outside the file) are passed to meshio's reader.
    """
    path = str(path)
    reader = _Reader(path)
    try:
        return _mesh_of(reader, reader.grids()[0])
    except _Unsupported:
        from bridge.mesh.shell import read_with_meshio
        return read_with_meshio(path, "xdmf")


def _step_name(grid: ET.Element, index: int) -> tuple[str, float | None]:
    t = grid.find("Time")
    time = float(t.get("Value")) if t is not None and t.get("Value") is not None else None
    for info in grid.findall("Information"):
        if info.get("Name", "").lower() in ("case", "load_case", "name") and info.get("Value"):
            return info.get("Value"), time
    if time is not None:
        return f"{time:g}", time
    return grid.get("Name") or f"step{index + 1}", time


def read_series(path: str | os.PathLike, lazy: bool = False) -> tuple[ShellMesh, list[Step]]:
    """Read the mesh of the first grid and every grid's cell arrays as steps.

    ``lazy`` leaves the steps' HDF5 arrays in the file (:class:`bridge.mesh.lazy.LazyH5`, read by rows on
    demand), for series too large to hold.

    Returns
    -------
    mesh : ShellMesh
        The mesh of the first grid (without its cell arrays when ``lazy``).
    steps : list of Step
        One per uniform grid in document order. Names come from an
        ``<Information Name="case" Value=...>`` element, else the ``<Time>``
        value (formatted with ``%g``), else the grid name. Cell arrays are over
        the global shell-cell index (rows of non-shell cells are dropped).
    """
    path = str(path)
    reader = _Reader(path)
    grids = reader.grids()
    try:
        mesh = _mesh_of(reader, grids[0], with_data=not lazy)
        steps, kept = [], {}
        for i, g in enumerate(grids):
            topo = g.find("Topology") if g.find("Topology") is not None else grids[0].find("Topology")
            key = ET.tostring(topo)                    # steps sharing one topology dataset share its split
            if key not in kept:
                kept[key] = np.concatenate([np.full(len(c), t in NODES_PER_CELL or t in ("quad9", "triangle7"))
                                            for t, c in reader.cells(g if g.find("Topology") is not None
                                                                     else grids[0])])
            keep = kept[key]
            arrays = {k: a if keep.all() else a[keep] for k, a in reader.cell_arrays(g, lazy, len(keep)).items()}
            steps.append(Step(*_step_name(g, i), arrays))
    except _Unsupported as exc:
        raise MeshError(f"XDMF construct not supported here: {exc}; write plain HDF DataItems", path) from None
    return mesh, steps
