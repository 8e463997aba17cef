"""VTK XML unstructured grid (``.vtu``): read and write, through meshio.

Mixed triangle/quad and triangle6/quad8 meshes round-trip. Cell arrays of
shape (n, k, m) are written flattened to (n, k·m) in C order (VTU keeps one
component axis only). A file with several ``<Piece>`` elements is refused:
meshio would silently return only the last one.
"""

from __future__ import annotations

import os
from typing import Mapping

import numpy as np

from bridge.atomic import atomic_path
from bridge.mesh.shell import ShellMesh, read_with_meshio, to_meshio
from shells.errors import MeshError

name = "vtu"
extensions = (".vtu",)
can_write = True


def sniff(head: bytes) -> bool:
    """True when the first bytes are a VTK XML file holding an UnstructuredGrid."""
    return b"<VTKFile" in head and b"UnstructuredGrid" in head


def _count_pieces(path: str) -> int:
    count, tail = 0, b""
    with open(path, "rb") as fh:
        while chunk := fh.read(1 << 20):
            buf = tail + chunk
            count += buf.count(b"<Piece ")
            tail = buf[-6:]
            count -= tail.count(b"<Piece ")  # counted again with the next chunk
    return count + tail.count(b"<Piece ")


def read(path: str | os.PathLike) -> ShellMesh:
    """Read the shell cells of a VTU file; cell arrays become global-cell data."""
    path = str(path)
    if os.path.exists(path) and _count_pieces(path) > 1:
        raise MeshError("the file has several <Piece> elements; merge them into one piece "
                        "(one unstructured grid) before reading", path)
    return read_with_meshio(path, "vtu")


def write(path: str | os.PathLike, mesh: ShellMesh, cell_data: Mapping[str, np.ndarray] | None = None) -> None:
    """Write ``mesh`` and ``cell_data`` (over global cells) to a VTU file atomically.

    Parameters
    ----------
    path : path-like
        Target ``.vtu`` file.
    mesh : ShellMesh
        The mesh; its own cell data is written too (``cell_data`` wins on a name clash).
    cell_data : dict of str to ndarray, optional
        Arrays of shape (n_cells,), (n_cells, k) or (n_cells, k, m) (flattened).
    """
    m = to_meshio(mesh, cell_data)
    import meshio

    with atomic_path(path) as tmp:
        meshio.write(str(tmp), m, file_format="vtu")
