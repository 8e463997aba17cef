"""Offscreen pictures of a cell field over a shell mesh (pyvista / VTK for the model, matplotlib around it).

Each view is drawn alone, to the exact size of its box in the picture (:mod:`postproc.layout`), by one
offscreen :class:`pyvista.Plotter` per picture that is closed before returning (no global theme or switch is
touched; :class:`postproc.scene.ViewRenderer`).
Cells are coloured here (:func:`postproc.colors.cell_rgb`) and lit by a single headlight with ambient 0.6 and
diffuse 0.4, so a face seen square-on shows exactly its map colour and oblique faces darken. Named views use
a parallel projection fitted to the model (:mod:`postproc.cameras`); ``worst`` looks at the marked cell and
its neighbourhood; an explicit camera is used as given (perspective). Cell edges are drawn only where cells
are large on screen. The marked cell gets a ring and a label only in views where it is visible (checked
against the depth buffer); elsewhere the view's caption says it is hidden.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from . import cameras, colors
from .scene import CellGeometry, ViewRenderer, cell_geometry, make_grid, outline, project
from .layout import Box, Mark, compose, free_spot, plan
from .legend import ColourBar, Legend, text_width

#: The named views, plus ``worst`` (the marked cell and its neighbourhood).
VIEWS = (*cameras.NAMED, "worst")
#: Cell edges are drawn when a typical cell is at least this many pixels across on screen.
EDGE_PIXELS = 9.0
#: A cell whose normal makes less than this cosine with the view direction is edge-on: not visible.
EDGE_ON = 0.1
#: A view whose model covers less than this fraction of it is refused as empty (edge-on).
EMPTY = 0.01
#: Width / height of the viewport of a close-up (at most) and of an explicit camera.
CLOSE_UP_ASPECT = 2.0

CameraTuple = tuple[tuple[float, float, float], tuple[float, float, float], tuple[float, float, float]]


@dataclass(frozen=True)
class ViewInfo:
    """What one view of a picture shows: its name, its box, whether edges were drawn and the mark seen."""

    name: str
    box: Box
    edges: bool
    mark_visible: bool | None


@dataclass(frozen=True)
class Picture:
    """A rendered field and what was drawn.

    Attributes
    ----------
    image : ndarray (height, width, 3) uint8
        The RGB picture.
    legend : tuple of (str, str)
        Legend entries (label, ``#rrggbb``) in the order shown, group names folded into the labels.
    limits : (float, float) or None
        Colour limits of a continuous field (None for categorical).
    cell_pixels : ndarray (ncell, 2) int
        (row, column) of every cell centre in the first view; −1 when off the picture.
    model_mask : ndarray (height, width) bool
        Pixels where the model is drawn (from the depth buffers of the views).
    regions : dict of str → Box
        ``title``, ``bar``, ``legend`` (when drawn) and ``view0``, ``view1``… boxes.
    views : tuple of ViewInfo
    """

    image: np.ndarray
    legend: tuple
    limits: tuple | None
    cell_pixels: np.ndarray
    model_mask: np.ndarray
    regions: dict
    views: tuple


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


def _limits(kind: str, v: np.ndarray, cap: float | None) -> tuple[float, float] | None:
    if kind == "categorical":
        return None
    if kind == "diverging":
        return colors.diverging_limits(v, cap)
    finite = v[np.isfinite(v)]
    lo, hi = (float(finite.min()), float(finite.max())) if finite.size else (0.0, 1.0)
    hi = hi if cap is None else min(hi, cap)
    return lo, (hi if hi > lo else lo + 1.0)


def build_legend(kind: str, v: np.ndarray, labels, groups, mark: int | None) -> Legend:
    """Categories present (grouped when ``groups`` names a group per category), cells without a value, the mark."""
    out: dict[str, list] = {}
    if kind == "categorical":
        pal = colors.palette(len(labels))
        for i in sorted({int(x) for x in v[np.isfinite(v)]}):
            out.setdefault(groups[i] if groups else "", []).append((labels[i], pal[i]))
    missing = int((~np.isfinite(v)).sum())
    tail = []
    if missing:
        tail.append((f"no value ({missing} cell{'s' if missing != 1 else ''}: flagged, no such ply or not computed)",
                     colors.NO_VALUE))
    if mark is not None:
        tail.append((f"ringed: the worst cell ({mark})", colors.MARK))
    groups_out = [(g, tuple(e)) for g, e in out.items()]
    if tail:
        groups_out.append(("", tuple(tail)))
    return Legend(tuple(groups_out))


def _orientations(views, points, geo: CellGeometry, mark):
    out = []
    for view in views:
        if not isinstance(view, str):
            out.append(("camera", None, CLOSE_UP_ASPECT))
        elif view == "worst":
            if mark is None:
                raise ValueError("view 'worst' needs a marked cell; this field has no worst cell")
            out.append(("worst", None, CLOSE_UP_ASPECT))
        else:
            o = cameras.orient(view, points, cameras.mean_normal(geo.normals, geo.areas))
            w, h = o.extent
            out.append((view, o, float(np.clip(w / max(h, 1e-12 * max(w, 1.0)), 0.25, 12.0))))
    named = [a for name, o, a in out if o is not None]
    if named:   # close-ups as wide as half the named views, so a slender model's pictures stay strips
        wide = max(CLOSE_UP_ASPECT, float(np.median(named)) / 2.0)
        out = [(name, o, a if o is not None else wide) for name, o, a in out]
    return out


def _camera(view, kind, o, box: Box, points, geo: CellGeometry, mark, cell_size) -> cameras.Camera:
    aspect = box.width / box.height
    if kind == "camera":
        pos, focal, up = (tuple(map(float, v)) for v in view)
        return cameras.Camera(pos, focal, up, parallel=False)
    if kind == "worst":
        diag = float(np.linalg.norm(np.ptp(points, axis=0)))
        radius = float(np.clip(10.0 * cell_size[mark], 0.03 * diag, 0.5 * diag))
        return cameras.close_up(geo.centres[mark], geo.normals[mark], radius, aspect, cameras.long_axis(points), points)
    return cameras.fit(o, points, aspect)


def _pixels_per_unit(cam: cameras.Camera, height: int) -> float:
    if cam.parallel:
        return height / (2.0 * cam.scale)
    dist = float(np.linalg.norm(np.subtract(cam.position, cam.focal)))
    return height / (2.0 * dist * np.tan(np.radians(15.0)))


def _visible(depth: np.ndarray, pixel: np.ndarray, point: np.ndarray, normal: np.ndarray, cam: cameras.Camera,
             tol: float) -> bool:
    """Whether the cell at ``point`` faces the camera (not edge-on) and the surface seen at ``pixel`` is at its
    depth (nothing in front of it)."""
    if pixel[0] < 0 or abs(float(np.dot(normal, cam.direction))) < EDGE_ON:
        return False
    distance = float((np.asarray(point) - np.asarray(cam.position)) @ cam.direction)
    return bool(abs(depth[pixel[0], pixel[1]] - distance) <= tol)


def _mark(cell: int, label: str | None, pixel, centre, normal, mask, depth, cam, box: Box, font: float) -> Mark:
    """The mark of the worst cell in one view: visible or not, and where its label can go."""
    label = label or f"cell {cell}"
    seen = _visible(depth, pixel, centre, normal, cam, 2.5 / _pixels_per_unit(cam, box.height))
    size = (int(1.9 * font), int(text_width(label, font) + 1.2 * font))
    return Mark(tuple(int(v) for v in pixel), seen, label, free_spot(mask, tuple(pixel), size, font) if seen else None)


def draw_field(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]], values: np.ndarray, *,
               kind: str, labels: Sequence[str] | None = None, groups: Sequence[str] | None = None, title: str,
               bar_title: str, views: Sequence[str | CameraTuple] = ("iso",), size: tuple[int, int] | None = None,
               mark: int | None = None, mark_label: str | None = None, cap: float | None = None) -> Picture:
    """Render a cell field and report what was drawn (see :func:`render_field` for the parameters)."""
    v = _field_values(kind, values, labels)
    grid = make_grid(points, blocks)
    if len(v) != grid.n_cells:
        raise ValueError(f"{len(v)} values for {grid.n_cells} cells")
    pts = np.asarray(points, dtype=float)
    geo = cell_geometry(points, blocks)
    limits = _limits(kind, v, cap)
    grid.cell_data["rgb"] = colors.cell_rgb(kind, v, limits, len(labels or ()))
    legend = build_legend(kind, v, labels, groups, mark)
    bar = ColourBar(kind, limits, bar_title, cap if cap is not None and limits[1] == cap else None) \
        if limits is not None else None
    cell_size = np.sqrt(geo.areas)
    typical = float(np.median(cell_size)) if cell_size.size else 1.0
    oriented = _orientations(views, pts, geo, mark)
    p = plan([a for _, _, a in oriented], size, legend if legend.groups else None, bar)
    H, W = p.size[1], p.size[0]
    images, marks, infos, captions = [], [], [], []
    model_mask = np.zeros((H, W), dtype=bool)
    first_pixels = None
    with ViewRenderer(grid, outline(grid)) as renderer:
        shots = []
        for (name, o, _), view, box in zip(oriented, views, p.views):
            cam = _camera(view, name, o, box, pts, geo, mark, cell_size)
            edges = bool(typical * _pixels_per_unit(cam, box.height) >= EDGE_PIXELS)
            shots.append((cam, edges, *renderer.view(cam, box.width, box.height, edges)))
    for k, ((name, o, _), box, (cam, edges, image, depth, proj)) in enumerate(zip(oriented, p.views, shots)):
        mask = np.isfinite(depth)
        if mask.mean() < EMPTY:
            raise ValueError(f"view {name!r} shows {'no cell' if not mask.any() else 'the model edge-on'} "
                             f"({100 * mask.mean():.1f} % of the view); choose another view or camera")
        pixels = project(proj, geo.centres, box.width, box.height)
        if k == 0:
            first_pixels = np.where(pixels >= 0, pixels + [box.top, box.left], -1)
        caption = name if name != "worst" else f"worst cell {mark} and its neighbourhood"
        if name == "camera":
            caption = f"camera {sum(1 for n, _, _ in oriented[:k + 1] if n == 'camera')}"
        m = None
        if mark is not None:
            m = _mark(mark, mark_label, pixels[mark], geo.centres[mark], geo.normals[mark], mask, depth, cam, box,
                      p.font)
            caption += "" if m.visible and m.spot else (f" — ringed: worst, {m.label}" if m.visible else
                                                         f" — worst cell {mark} is hidden in this view")
        marks.append(m)
        images.append(image)
        captions.append(caption)
        model_mask[box.slices] |= mask
        infos.append(ViewInfo(name, box, bool(edges), None if m is None else m.visible))
    title_lines = [line for line in str(title).split("\n") if line][:2]
    image = compose(p, images, title_lines, captions, legend if legend.groups else None, bar, marks)
    regions = {"title": p.title, **{f"view{k}": b for k, b in enumerate(p.views)}}
    if p.bar is not None:
        regions["bar"] = p.bar
    if p.legend is not None:
        regions["legend"] = p.legend
    return Picture(image=image, legend=tuple(legend.entries), limits=limits, cell_pixels=first_pixels,
                   model_mask=model_mask, regions=regions, views=tuple(infos))


def render_field(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]], values: np.ndarray, *,
                 kind: str, labels: Sequence[str] | None = None, groups: Sequence[str] | None = None, title: str,
                 bar_title: str, views: Sequence[str | CameraTuple] = ("iso",), size: tuple[int, int] | None = None,
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
    groups : list of str, optional
        The legend group of each category (e.g. its laminate); entries are listed under their group.
    title : str
        One or two lines (``\\n``) for the title band.
    bar_title : str
        Colour bar title, with units (continuous kinds).
    views : sequence of str or camera
        One view each: ``iso``, ``top``, ``bottom``, ``front``, ``back``, ``side``, ``+normal``, ``-normal``
        (the mean cell normal), ``worst`` (the marked cell and its neighbourhood), or an explicit camera
        ``((px, py, pz), (fx, fy, fz), (ux, uy, uz))`` (position, focal point, view-up; perspective).
    size : (int, int), optional
        Width and height of the whole picture in pixels; by default 1600 wide and as high as the model needs.
    mark : int, optional
        A cell (global index) to mark with a ring and ``mark_label`` where it is visible.
    mark_label : str, optional
        Text beside the mark (default ``"cell N"``).
    cap : float, optional
        Upper colour limit of a ``diverging`` or ``sequential`` field (larger values take the end colour).

    Returns
    -------
    ndarray (height, width, 3) uint8

    Raises
    ------
    ValueError
        A view that shows no cell, a size too small for the views, a bad argument.
    """
    return draw_field(points, blocks, values, kind=kind, labels=labels, groups=groups, title=title,
                      bar_title=bar_title, views=views, size=size, mark=mark, mark_label=mark_label, cap=cap).image
