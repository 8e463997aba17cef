"""Offscreen pictures of a cell field over a shell mesh (pyvista / VTK).

Every picture is drawn in its own offscreen :class:`pyvista.Plotter` that is
closed before returning (no global theme or ``OFF_SCREEN`` switch is touched).
Colours come from :mod:`postproc.colors`. The light is a single headlight with
ambient 0.35 and diffuse 0.65, so a face seen square-on shows exactly its map
colour and oblique faces darken, which shows the shape of a curved shell.
Named views use a parallel projection and frame the whole model; an explicit
camera is used as given.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from . import colors

#: meshio cell type → VTK cell type id (node order is the same).
VTK_TYPES = {"triangle": 5, "quad": 9, "triangle6": 22, "quad8": 23}
CORNERS = {"triangle": 3, "quad": 4, "triangle6": 3, "quad8": 4}
VIEWS = ("iso", "top", "front", "side", "+normal", "-normal")
#: Named view → (direction from the model centre to the camera, view-up); None: use the mean normal.
_VIEW_DIRECTIONS = {"iso": ((1.0, -1.0, 1.0), (0.0, 0.0, 1.0)), "top": ((0.0, 0.0, 1.0), (0.0, 1.0, 0.0)),
                    "front": ((0.0, -1.0, 0.0), (0.0, 0.0, 1.0)), "side": ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0))}

Camera = tuple[tuple[float, float, float], tuple[float, float, float], tuple[float, float, float]]


@dataclass(frozen=True)
class Picture:
    """A rendered field and what was drawn.

    Attributes
    ----------
    image : ndarray (height, width, 3) uint8
        The RGB picture.
    legend : tuple of (str, str)
        Legend entries (label, ``#rrggbb``) in the order shown.
    limits : (float, float) or None
        Colour limits of a continuous field (None for categorical).
    cell_pixels : ndarray (ncell, 2) int
        (row, column) of every cell centre in the first view; −1 when off the picture.
    """

    image: np.ndarray
    legend: tuple
    limits: tuple | None
    cell_pixels: np.ndarray


def cell_centres(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> np.ndarray:
    """Mean of the corner nodes of every cell, in global cell order, shape (ncell, 3)."""
    pts = np.asarray(points, dtype=float)
    return np.vstack([pts[np.asarray(conn)[:, :CORNERS[t]]].mean(axis=1) for t, conn in blocks])


def mean_normal(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> np.ndarray:
    """Area-weighted mean unit normal of the cells (Newell's formula on the corners); +z if it vanishes."""
    pts = np.asarray(points, dtype=float)
    total = np.zeros(3)
    for t, conn in blocks:
        c = pts[np.asarray(conn)[:, :CORNERS[t]]]
        total += np.cross(c, np.roll(c, -1, axis=1)).sum(axis=(0, 1))
    norm = np.linalg.norm(total)
    return total / norm if norm > 0 else np.array([0.0, 0.0, 1.0])


def make_grid(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]):
    """A :class:`pyvista.UnstructuredGrid` of the shell blocks (cells in global order)."""
    import pyvista as pv

    cells, types = [], []
    for t, conn in blocks:
        conn = np.asarray(conn, dtype=np.int64)
        cells.append(np.column_stack([np.full(len(conn), conn.shape[1]), conn]).ravel())
        types.append(np.full(len(conn), VTK_TYPES[t], dtype=np.uint8))
    return pv.UnstructuredGrid(np.concatenate(cells), np.concatenate(types), np.array(points, dtype=float))


def view_camera(view: str | Camera, points: np.ndarray, blocks) -> tuple[Camera | None, tuple, tuple]:
    """(explicit camera or None, direction, view-up) of a named view or an explicit camera."""
    if not isinstance(view, str):
        return tuple(tuple(map(float, v)) for v in view), (), ()
    if view in _VIEW_DIRECTIONS:
        d, up = _VIEW_DIRECTIONS[view]
        return None, d, up
    if view not in ("+normal", "-normal"):
        raise ValueError(f"unknown view {view!r}; use one of {', '.join(VIEWS)} or an explicit camera")
    n = mean_normal(points, blocks) * (1.0 if view == "+normal" else -1.0)
    up = np.array([0.0, 1.0, 0.0]) if abs(n[1]) < 0.9 else np.array([0.0, 0.0, 1.0])
    return None, tuple(n), tuple(up - n * (up @ n))


def legend_entries(kind: str, values: np.ndarray, labels: Sequence[str] | None,
                   mark_label: str | None = None) -> list[tuple[str, str]]:
    """The legend a picture shows: categories present (categorical), cells without a value, the marked cell.

    Parameters
    ----------
    kind : {"sequential", "diverging", "categorical"}
    values : ndarray (ncell,)
        Field values (category indices for ``categorical``; NaN or negative: none).
    labels : list of str or None
        Category names, indexed by category.
    mark_label : str, optional
        Label of the marked cell.
    """
    v = np.asarray(values, dtype=float)
    entries = []
    if kind == "categorical":
        present = sorted({int(x) for x in v[np.isfinite(v)]})
        pal = colors.palette(len(labels or ()))
        entries += [(labels[i], pal[i]) for i in present]
    missing = int((~np.isfinite(v)).sum())
    if missing:
        entries.append((f"no value ({missing} cell{'s' if missing != 1 else ''}: flagged, no such ply or not computed)",
                        colors.NO_VALUE))
    if mark_label:
        entries.append((f"worst: {mark_label}", colors.MARK))
    return entries


def _field_values(kind: str, values, labels) -> np.ndarray:
    v = np.array(values, dtype=float)  # a copy: the caller's array is never touched
    if v.ndim != 1:
        raise ValueError(f"values must have one entry per cell, got shape {v.shape}")
    v[~np.isfinite(v)] = np.nan
    if kind == "categorical":
        if labels is None:
            raise ValueError("a categorical field needs labels (one name per category)")
        v[(v < 0) | (v >= len(labels))] = np.nan
    elif kind not in colors.KINDS:
        raise ValueError(f"unknown kind {kind!r}; use one of {', '.join(colors.KINDS)}")
    return v


def _colour_args(kind: str, v: np.ndarray, labels, cap: float | None = None) -> tuple[dict, tuple | None]:
    if kind == "categorical":
        n = len(labels)
        return dict(cmap=colors.categorical_lut(n), clim=(-0.5, n - 0.5), n_colors=n), None
    if kind == "diverging":
        lo, hi = colors.diverging_limits(v, cap)
        return dict(cmap=colors.diverging_lut(lo, hi), clim=(lo, hi)), (lo, hi)
    finite = v[np.isfinite(v)]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    hi = hi if hi > lo else lo + 1.0
    return dict(cmap=colors.SEQUENTIAL, clim=(lo, hi)), (lo, hi)


def _place_camera(plotter, view, points, blocks, grid) -> None:
    explicit, direction, up = view_camera(view, points, blocks)
    if explicit is not None:
        plotter.camera.position, plotter.camera.focal_point, plotter.camera.up = explicit
        plotter.camera.parallel_projection = False
        plotter.reset_camera_clipping_range()
        return
    centre = np.array(grid.center)
    d = np.asarray(direction, dtype=float)
    plotter.camera.focal_point = tuple(centre)
    plotter.camera.position = tuple(centre + d / np.linalg.norm(d) * max(grid.length, 1e-12) * 3.0)
    plotter.camera.up = tuple(up)
    plotter.camera.parallel_projection = True
    plotter.reset_camera()
    plotter.camera.zoom(0.85)  # room for the title, the scalar bar and the legend


def _pixels(renderer, centres: np.ndarray, height: int, width: int) -> np.ndarray:
    import vtk

    coord = vtk.vtkCoordinate()
    coord.SetCoordinateSystemToWorld()
    out = np.full((len(centres), 2), -1, dtype=int)
    for i, c in enumerate(centres):
        coord.SetValue(*map(float, c))
        x, y = coord.GetComputedDoubleDisplayValue(renderer)
        row, col = int(round(height - 1 - y)), int(round(x))
        if 0 <= row < height and 0 <= col < width:
            out[i] = (row, col)
    return out


def _swatch(colour: str):
    """A unit square coloured by its own scalars (so the legend text can stay black)."""
    import pyvista as pv

    square = pv.PolyData(np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0]], dtype=float), faces=[4, 0, 1, 2, 3])
    square.cell_data["rgb"] = (colors.hex_to_rgb(colour) * 255).round().astype(np.uint8)[None, :]
    return square


def _legend(plotter, entries, viewport_px: float, font: int) -> None:
    longest = max(len(name) for name, _ in entries)
    width = min(0.95, (longest + 4) * 0.6 * font / viewport_px)
    legend = plotter.add_legend(labels=[[name, "black"] for name, _ in entries], bcolor="white", border=True,
                                size=(width, 0.06 * len(entries) + 0.02), loc="lower left", face="rectangle")
    for i, (_, colour) in enumerate(entries):
        legend.SetEntrySymbol(i, _swatch(colour))


def draw_field(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]], values: np.ndarray, *,
               kind: str, labels: Sequence[str] | None = None, title: str, bar_title: str,
               views: Sequence[str | Camera] = ("iso",), size: tuple[int, int] = (1200, 900),
               mark: int | None = None, mark_label: str | None = None, cap: float | None = None) -> Picture:
    """Render a cell field and report what was drawn (see :func:`render_field` for the parameters)."""
    import pyvista as pv

    v = _field_values(kind, values, labels)
    grid = make_grid(points, blocks)
    if len(v) != grid.n_cells:
        raise ValueError(f"{len(v)} values for {grid.n_cells} cells")
    grid.cell_data[bar_title] = v
    args, limits = _colour_args(kind, v, labels, cap)
    entries = legend_entries(kind, v, labels, mark_label if mark is not None else None)
    centres = cell_centres(points, blocks)
    width, height = int(size[0]), int(size[1])
    font = max(7, height // 45)
    plotter = pv.Plotter(off_screen=True, window_size=(width, height), shape=(1, len(views)),
                         lighting="none", border=False)
    try:
        plotter.set_background("white")
        plotter.add_light(pv.Light(light_type="headlight"))
        for k, view in enumerate(views):
            plotter.subplot(0, k)
            bar = dict(title=bar_title, color="black", fmt="%.3g", n_labels=5, vertical=True,
                       position_x=0.84, position_y=0.22, width=0.07, height=0.6,
                       title_font_size=font, label_font_size=font)
            plotter.add_mesh(grid, scalars=bar_title, preference="cell", nan_color=colors.NO_VALUE,
                             show_edges=True, edge_color=colors.EDGE, line_width=1, ambient=0.6, diffuse=0.4,
                             specular=0.0, show_scalar_bar=(kind != "categorical" and k == len(views) - 1),
                             scalar_bar_args=bar, copy_mesh=True, **args)
            if mark is not None:
                plotter.add_point_labels(centres[[mark]], [mark_label or f"cell {mark}"], point_color=colors.MARK,
                                         point_size=max(6, height // 60), render_points_as_spheres=True,
                                         always_visible=True, font_size=font, text_color="black",
                                         shape_color="white", shape_opacity=0.85)
            if k == 0:
                plotter.add_text(title, position="upper_left", font_size=font, color="black")
            if len(views) > 1:
                plotter.add_text(view if isinstance(view, str) else "camera", position="lower_right",
                                 font_size=font, color="dimgray")
            if k == 0 and entries:
                _legend(plotter, entries, width / len(views), font)
            _place_camera(plotter, view, points, blocks, grid)
        image = np.asarray(plotter.screenshot(return_img=True))[..., :3].copy()
        plotter.subplot(0, 0)
        pixels = _pixels(plotter.renderer, centres, height, width)
    finally:
        plotter.close()
    return Picture(image=image, legend=tuple(entries), limits=limits, cell_pixels=pixels)


def render_field(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]], values: np.ndarray, *,
                 kind: str, labels: Sequence[str] | None = None, title: str, bar_title: str,
                 views: Sequence[str | Camera] = ("iso",), size: tuple[int, int] = (1200, 900),
                 mark: int | None = None, mark_label: str | None = None, cap: float | None = None) -> np.ndarray:
    """Render one value per cell over a shell mesh, offscreen, and return the RGB picture.

    Parameters
    ----------
    points : ndarray (npoint, 3)
        Node coordinates (model length unit).
    blocks : sequence of (str, ndarray)
        ``(cell type, connectivity)`` in global cell order; types ``triangle``,
        ``quad``, ``triangle6``, ``quad8`` (meshio node order).
    values : ndarray (ncell,)
        The field; NaN (or ±inf) cells are drawn grey and counted in the legend.
        For ``categorical``, a category index into ``labels`` (negative: none).
        Not modified.
    kind : {"sequential", "diverging", "categorical"}
        ``sequential``: viridis over the finite range; ``diverging``: the
        balance map with zero at its pale centre (two-slope scale);
        ``categorical``: the palette with a legend listing the categories present.
    labels : list of str, optional
        Category names (required for ``categorical``).
    title : str
        Text at the top left of the first view.
    bar_title : str
        Scalar bar title, with units (continuous kinds); also the array name.
    views : sequence of str or camera
        One subplot each, side by side: ``iso``, ``top``, ``front``, ``side``,
        ``+normal``, ``-normal`` (the mean cell normal), or an explicit camera
        ``((px, py, pz), (fx, fy, fz), (ux, uy, uz))`` (position, focal point, view-up).
    size : (int, int)
        Width and height of the whole picture in pixels.
    mark : int, optional
        A cell (global index) to mark with a dot and ``mark_label``.
    mark_label : str, optional
        Text beside the mark (default ``"cell N"``).
    cap : float, optional
        Upper colour limit of a ``diverging`` field (larger values take the end colour).

    Returns
    -------
    ndarray (height, width, 3) uint8
    """
    return draw_field(points, blocks, values, kind=kind, labels=labels, title=title, bar_title=bar_title,
                      views=views, size=size, mark=mark, mark_label=mark_label, cap=cap).image
