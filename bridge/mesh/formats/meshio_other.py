"""Any other mesh format meshio reads (legacy VTK, Exodus, MED, CGNS, ...): read only.

The format is chosen from the file extension with meshio's own table, except
legacy VTK, recognised by content. Only the shell cells are kept (see
:mod:`bridge.mesh`).
"""

from __future__ import annotations

import os

from bridge.mesh.shell import ShellMesh, read_with_meshio
from shells.errors import MeshError

name = "meshio"
extensions = (".vtk", ".inp", ".bdf", ".nas", ".fem", ".med", ".cgns", ".e", ".exo", ".ex2",
              ".obj", ".off", ".ply", ".stl", ".su2", ".mesh", ".meshb", ".avs", ".dat", ".tec",
              ".f3grid", ".h5m", ".hmf", ".mdpa", ".ugrid", ".vol", ".vol.gz", ".post", ".post.gz",
              ".dato", ".dato.gz")
can_write = False


def sniff(head: bytes) -> bool:
    """True for a legacy VTK file (``# vtk DataFile``); other formats go by extension."""
    return head.lstrip().startswith(b"# vtk DataFile")


def _file_format(path: str) -> str:
    import meshio

    lower = path.lower()
    if lower.endswith(".vtk"):
        return "vtk"
    for ext in sorted(meshio.extension_to_filetypes, key=len, reverse=True):
        if lower.endswith(ext) and ext in extensions:
            return meshio.extension_to_filetypes[ext][0]
    with open(path, "rb") as fh:
        if sniff(fh.read(256)):
            return "vtk"
    raise MeshError(f"no meshio format for this extension; use one of {', '.join(extensions)}", path)


def read(path: str | os.PathLike) -> ShellMesh:
    """Read the shell cells of a file in a format meshio supports."""
    path = str(path)
    if not os.path.exists(path):
        raise MeshError("file not found; check the path", path)
    return read_with_meshio(path, _file_format(path))
