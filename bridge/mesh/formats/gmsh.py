"""Gmsh MSH files (versions 2.2 and 4.1, ASCII and binary): read only, through meshio.

Physical groups come through as ``cell_data["gmsh:physical"]`` (over the global
cell index) and their names (2-D physical names only) as
``tags["gmsh:physical"]`` (name -> physical tag number).
"""

from __future__ import annotations

import os

from bridge.mesh.shell import ShellMesh, read_with_meshio

name = "gmsh"
extensions = (".msh",)
can_write = False


def sniff(head: bytes) -> bool:
    """True when the file starts with a ``$MeshFormat`` section."""
    return head.lstrip().startswith(b"$MeshFormat")


def read(path: str | os.PathLike) -> ShellMesh:
    """Read the shell cells of a Gmsh MSH 2.2 or 4.1 file (ASCII or binary)."""
    return read_with_meshio(str(path), "gmsh")
