"""The demo mesh: six flat rectangular panels of quadrilaterals forming the closed bay.

Each panel has its own local axes (u, v) with the outward normal n = u × v; its
plate coordinates are x = (p − origin)·u ∈ [0, a], y = (p − origin)·v ∈ [0, b].
u is horizontal on every panel: fore-aft on the floor and the lid, and round
the bay counter-clockwise seen from above (the hoop direction) on the walls,
so the panel axes coincide with the laminate axes of ``bridge.demo.scenario``.
Nodes on shared edges are merged, so the box is one connected mesh.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bridge.mesh.shell import ShellMesh

from bridge.demo.scenario import DEMO, FRAME_ARRAY, TAG_ARRAY, Scenario

_X, _Y, _Z = np.eye(3)


@dataclass(frozen=True)
class Panel:
    """One flat rectangular panel of the bay.

    Attributes
    ----------
    name : str
        Panel name (``floor``, ``port-wall``, ...).
    tag : int
        Value of the ``panel`` cell array on its cells.
    zone : str
        Definition zone that takes it (``floor``, ``walls``, ``lid``).
    origin, u, v : tuple of 3 floats
        Corner at plate coordinates (0, 0) and the unit plate axes, global.
    a, b : float
        Lengths along u and v (mm).
    nu, nv : int
        Cells along u and v.
    frame_ref : tuple of 3 floats
        Element-frame reference vector of its cells (global).
    """

    name: str
    tag: int
    zone: str
    origin: tuple[float, float, float]
    u: tuple[float, float, float]
    v: tuple[float, float, float]
    a: float
    b: float
    nu: int
    nv: int
    frame_ref: tuple[float, float, float]

    @property
    def normal(self) -> np.ndarray:
        """Outward unit normal u × v."""
        return np.cross(self.u, self.v)

    @property
    def n_cells(self) -> int:
        return self.nu * self.nv

    def local(self, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Plate coordinates (x along u, y along v) of global points (..., 3)."""
        d = np.asarray(points, dtype=float) - np.asarray(self.origin)
        return d @ np.asarray(self.u), d @ np.asarray(self.v)


def _t(v: np.ndarray) -> tuple[float, float, float]:
    return tuple(float(c) for c in v)


def panels(s: Scenario = DEMO) -> tuple[Panel, ...]:
    """The six panels in mesh order: floor, port wall, front bulkhead, starboard wall, rear bulkhead, lid."""
    L, W, H = s.size
    nx, ny, nz = s.cells
    P = Panel
    return (
        P("floor", 1, "floor", (0.0, W, 0.0), _t(_X), _t(-_Y), L, W, nx, ny, _t(_X)),
        P("port-wall", 2, "walls", (0.0, 0.0, 0.0), _t(_X), _t(_Z), L, H, nx, nz, _t(_Z)),
        P("front-bulkhead", 3, "walls", (L, 0.0, 0.0), _t(_Y), _t(_Z), W, H, ny, nz, _t(_Z)),
        P("starboard-wall", 4, "walls", (L, W, 0.0), _t(-_X), _t(_Z), L, H, nx, nz, _t(_Z)),
        P("rear-bulkhead", 5, "walls", (0.0, W, 0.0), _t(-_Y), _t(_Z), W, H, ny, nz, _t(_Z)),
        P("lid", 6, "lid", (0.0, 0.0, H), _t(_X), _t(_Y), L, W, nx, ny, _t(_X)),
    )


def _panel_grid(p: Panel) -> tuple[np.ndarray, np.ndarray]:
    """Nodes (nu+1)(nv+1) × 3 and quads (nu·nv) × 4, counter-clockwise about the outward normal."""
    s = np.linspace(0.0, p.a, p.nu + 1)
    t = np.linspace(0.0, p.b, p.nv + 1)
    S, T = np.meshgrid(s, t, indexing="ij")
    pts = (np.asarray(p.origin) + S[..., None] * np.asarray(p.u) + T[..., None] * np.asarray(p.v)).reshape(-1, 3)
    node = np.arange((p.nu + 1) * (p.nv + 1)).reshape(p.nu + 1, p.nv + 1)
    quads = np.stack([node[:-1, :-1], node[1:, :-1], node[1:, 1:], node[:-1, 1:]], axis=-1).reshape(-1, 4)
    return pts, quads


def demo_mesh(s: Scenario = DEMO) -> ShellMesh:
    """The bay as one quadrilateral :class:`ShellMesh`.

    Returns
    -------
    ShellMesh
        One ``quad`` block, cells panel after panel in :func:`panels` order; cell arrays ``panel`` (int32
        tag, Gmsh-like) and ``frame_ref`` (float64 (n, 3) element-frame reference vectors).
    """
    pts, conn, tags, refs, base = [], [], [], [], 0
    for p in panels(s):
        xyz, quads = _panel_grid(p)
        pts.append(xyz)
        conn.append(quads + base)
        base += len(xyz)
        tags.append(np.full(p.n_cells, p.tag, dtype=np.int32))
        refs.append(np.tile(np.asarray(p.frame_ref), (p.n_cells, 1)))
    allpts = np.concatenate(pts)
    # Merge the coincident nodes of shared edges (coordinates rounded to 1e-6 mm).
    uniq, inverse = np.unique(np.round(allpts, 6), axis=0, return_inverse=True)
    quads = inverse.reshape(-1)[np.concatenate(conn)]
    return ShellMesh(uniq, (("quad", quads.astype(np.int64)),),
                     {TAG_ARRAY: np.concatenate(tags), FRAME_ARRAY: np.concatenate(refs)}, {}, "demo")


def panel_of_cells(mesh: ShellMesh, s: Scenario = DEMO) -> np.ndarray:
    """Index into :func:`panels` of every cell (from the ``panel`` tag array)."""
    tag = np.asarray(mesh.cell_data[TAG_ARRAY]).reshape(-1)
    lookup = {p.tag: k for k, p in enumerate(panels(s))}
    return np.array([lookup[int(t)] for t in tag], dtype=np.int64)
