"""The model as VTK sees it: cell geometry, the grid, its outline, and an offscreen renderer of views.

Used by :mod:`postproc.render`; pure numpy except where pyvista is imported (inside the functions).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from . import cameras, colors

#: meshio cell type → VTK cell type id (node order is the same).
VTK_TYPES = {"triangle": 5, "quad": 9, "triangle6": 22, "quad8": 23}
CORNERS = {"triangle": 3, "quad": 4, "triangle6": 3, "quad8": 4}


@dataclass(frozen=True)
class CellGeometry:
    centres: np.ndarray   # (ncell, 3)
    normals: np.ndarray   # (ncell, 3) unit
    areas: np.ndarray     # (ncell,)


def cell_geometry(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> CellGeometry:
    """Centres (mean of the corners), unit normals and areas (Newell's formula) of every cell, global order."""
    pts = np.asarray(points, dtype=float)
    centres, normals = [], []
    for t, conn in blocks:
        c = pts[np.asarray(conn)[:, :CORNERS[t]]]
        centres.append(c.mean(axis=1))
        normals.append(0.5 * np.cross(c, np.roll(c, -1, axis=1)).sum(axis=1))
    n = np.vstack(normals)
    area = np.linalg.norm(n, axis=1)
    return CellGeometry(np.vstack(centres), n / np.where(area > 0, area, 1.0)[:, None], area)


def cell_centres(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> np.ndarray:
    """Mean of the corner nodes of every cell, in global cell order, shape (ncell, 3)."""
    return cell_geometry(points, blocks).centres


def make_grid(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]):
    """A :class:`pyvista.UnstructuredGrid` of the shell blocks (cells in global order)."""
    import pyvista as pv

    cells, types = [], []
    for t, conn in blocks:
        conn = np.asarray(conn, dtype=np.int64)
        cells.append(np.column_stack([np.full(len(conn), conn.shape[1]), conn]).ravel())
        types.append(np.full(len(conn), VTK_TYPES[t], dtype=np.uint8))
    return pv.UnstructuredGrid(np.concatenate(cells), np.concatenate(types), np.array(points, dtype=float))


def outline(grid):
    """The model's boundary and crease lines (faces meeting at more than 30°), drawn in every view."""
    return grid.extract_surface(algorithm=None).extract_feature_edges(
        feature_angle=30.0, boundary_edges=True, feature_edges=True, manifold_edges=False, non_manifold_edges=False)


class ViewRenderer:
    """One offscreen plotter that draws a mesh from several cameras (use as a context manager).

    The cells are coloured by the grid's ``rgb`` cell array; ``lines`` (the outline) is drawn in every view;
    cell edges are drawn, where asked, as a separate line actor, never by the renderer's own
    surface-with-edges mode, whose shader marks the diagonal of every quadrilateral.
    """

    def __init__(self, grid, lines=None):
        import pyvista as pv

        self.grid = grid
        self.pl = pv.Plotter(off_screen=True, window_size=(64, 64), lighting="none", border=False)
        self.pl.set_background("white")
        self.pl.add_light(pv.Light(light_type="headlight"))
        self.pl.add_mesh(grid, scalars="rgb", rgb=True, preference="cell", ambient=0.6, diffuse=0.4, specular=0.0,
                         copy_mesh=False, show_scalar_bar=False)
        if lines is not None and lines.n_cells:
            self.pl.add_mesh(lines, color=colors.EDGE, line_width=1.5, lighting=False)
        self.edges = None

    def __enter__(self) -> "ViewRenderer":
        return self

    def __exit__(self, *exc) -> None:
        self.pl.close()

    def view(self, cam: cameras.Camera, width: int, height: int, edges: bool = False):
        """(RGB image, depth (distance from the camera; NaN where empty), 4×4 projection) of one view."""
        if edges and self.edges is None:
            self.edges = self.pl.add_mesh(self.grid.extract_all_edges(), color=colors.EDGE, line_width=1,
                                          lighting=False)
        if self.edges is not None:
            self.edges.SetVisibility(bool(edges))
        pl = self.pl
        pl.window_size = (int(width), int(height))
        c = pl.camera
        c.position, c.focal_point, c.up = cam.position, cam.focal, cam.up
        c.parallel_projection = cam.parallel
        if cam.parallel:
            c.parallel_scale = cam.scale
        if cam.clip is not None:
            c.clipping_range = cam.clip
        else:
            pl.renderer.ResetCameraClippingRange()
        pl.camera_set = True
        pl.render()          # the plotter keeps the last frame otherwise: draw this camera's before reading
        image = np.asarray(pl.screenshot(return_img=True))[..., :3].copy()
        depth = -np.asarray(pl.get_image_depth(fill_value=np.nan, reset_camera_clipping_range=False), dtype=float)
        m = c.GetCompositeProjectionTransformMatrix(width / height, -1, 1)
        proj = np.array([[m.GetElement(i, j) for j in range(4)] for i in range(4)])
        return image, depth, proj


def project(proj: np.ndarray, xyz: np.ndarray, width: int, height: int) -> np.ndarray:
    """(row, col) pixels of points under a VTK composite projection matrix; −1 where off the view."""
    h = np.column_stack([xyz, np.ones(len(xyz))]) @ proj.T
    ndc = h[:, :3] / h[:, 3:4]
    col = np.floor((ndc[:, 0] + 1.0) / 2.0 * width).astype(int)
    row = np.floor((1.0 - ndc[:, 1]) / 2.0 * height).astype(int)
    inside = (row >= 0) & (row < height) & (col >= 0) & (col < width) & (np.abs(ndc[:, 2]) <= 1.0)
    return np.where(inside[:, None], np.column_stack([row, col]), -1)
