"""Mesh file formats: the one explicit registry.

Each module in :data:`FORMATS` has ``name``, ``extensions``, ``can_write``,
``sniff(head: bytes) -> bool`` (a content check on the first bytes),
``read(path) -> ShellMesh`` and, when ``can_write``, ``write(path, mesh, cell_data)``.
Add a module, add it to the tuple: the tests run over the tuple.
"""

from __future__ import annotations

import os
from types import ModuleType
from typing import Mapping

import numpy as np

from bridge.mesh.formats import gmsh, meshio_other, vtu, xdmf
from bridge.mesh.shell import ShellMesh
from shells.errors import MeshError

FORMATS: tuple[ModuleType, ...] = (vtu, xdmf, gmsh, meshio_other)
SNIFF_BYTES = 4096


def _by_extension(path: str, writable: bool = False) -> ModuleType | None:
    lower = path.lower()
    hits = [(len(ext), fmt) for fmt in FORMATS for ext in fmt.extensions
            if lower.endswith(ext) and (fmt.can_write or not writable)]
    return max(hits, key=lambda h: h[0])[1] if hits else None


def _known() -> str:
    return ", ".join(f"{f.name} ({' '.join(f.extensions[:4])}{' ...' if len(f.extensions) > 4 else ''})"
                     for f in FORMATS)


def detect(path: str | os.PathLike) -> ModuleType:
    """Pick the format module of ``path``: by content first, then by extension.

    Raises
    ------
    MeshError
        If the file is missing or neither its content nor its extension is known.
    """
    path = str(path)
    try:
        with open(path, "rb") as fh:
            head = fh.read(SNIFF_BYTES)
    except FileNotFoundError:
        raise MeshError("file not found; check the path", path) from None
    for fmt in FORMATS:
        if fmt.sniff(head):
            return fmt
    fmt = _by_extension(path)
    if fmt is None:
        raise MeshError(f"unknown mesh format (content not recognised, extension not known); "
                        f"known formats: {_known()}", path)
    return fmt


def read_mesh(path: str | os.PathLike) -> ShellMesh:
    """Read the shell cells of any registered format (chosen by :func:`detect`)."""
    return detect(path).read(path)


def write_mesh(path: str | os.PathLike, mesh: ShellMesh,
               cell_data: Mapping[str, np.ndarray] | None = None) -> None:
    """Write ``mesh`` with ``cell_data`` (over global cells) in the format of the extension.

    Raises
    ------
    MeshError
        If no writable format has that extension.
    """
    fmt = _by_extension(str(path), writable=True)
    if fmt is None:
        raise MeshError("cannot write this extension; use one of "
                        + ", ".join(e for f in FORMATS if f.can_write for e in f.extensions), str(path))
    fmt.write(path, mesh, cell_data)
