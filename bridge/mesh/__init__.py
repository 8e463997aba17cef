"""Shell meshes: the in-memory model every reader returns and the one registry of file formats."""

from bridge.mesh.shell import ShellMesh

__all__ = ["ShellMesh"]
