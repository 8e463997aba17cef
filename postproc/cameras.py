"""Cameras fitted to a model: named views, the worst-cell close-up, and how views share a picture.

Pure geometry on numpy arrays (no VTK). A named view looks along a fixed direction with parallel projection;
its camera is rolled so that the model's long axis lies across the picture when that makes the model
larger on screen (a slender spar seen from an oblique direction), and zoomed so that the model fills its
viewport with a small margin. The close-up of a cell looks along the cell's normal, centred on it, showing
the cells within a radius around it; the clipping range keeps only the surface near that cell, so a wall in
front of it cannot hide it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Named view → (direction from the model to the camera, preferred view-up); ±normal use the mean cell normal.
DIRECTIONS = {"iso": ((1.0, -1.0, 1.0), (0.0, 0.0, 1.0)), "top": ((0.0, 0.0, 1.0), (0.0, 1.0, 0.0)),
              "bottom": ((0.0, 0.0, -1.0), (0.0, 1.0, 0.0)), "front": ((0.0, -1.0, 0.0), (0.0, 0.0, 1.0)),
              "back": ((0.0, 1.0, 0.0), (0.0, 0.0, 1.0)), "side": ((1.0, 0.0, 0.0), (0.0, 0.0, 1.0))}
NAMED = (*DIRECTIONS, "+normal", "-normal")
#: Empty border around a fitted model, as a fraction of the viewport.
MARGIN = 0.04
#: Roll the camera to lay the model's long axis across the picture when its box on screen shrinks by this.
ROLL_GAIN = 1.5


@dataclass(frozen=True)
class Camera:
    """A camera: position, focal point and view-up (model length unit).

    ``parallel``: parallel projection with ``scale`` the half height of the viewport in model units;
    ``clip``: near and far distances from the camera (None: VTK chooses).
    """

    position: tuple[float, float, float]
    focal: tuple[float, float, float]
    up: tuple[float, float, float]
    parallel: bool = True
    scale: float = 1.0
    clip: tuple[float, float] | None = None

    @property
    def direction(self) -> np.ndarray:
        """Unit vector from the camera to the focal point."""
        d = np.asarray(self.focal, float) - np.asarray(self.position, float)
        return d / np.linalg.norm(d)


@dataclass(frozen=True)
class Orientation:
    """Where a view looks from and how it is rolled, before it is fitted to a viewport."""

    toward: np.ndarray      # unit vector from the model to the camera
    up: np.ndarray          # unit view-up, perpendicular to ``toward``
    extent: tuple[float, float]   # width and height of the model's box on screen (model units)
    centre: np.ndarray      # model point at the centre of that box


def _unit(v) -> np.ndarray:
    v = np.asarray(v, dtype=float)
    n = np.linalg.norm(v)
    return v / n if n > 0 else v


def _perpendicular_up(toward: np.ndarray, up) -> np.ndarray:
    up = np.asarray(up, dtype=float)
    up = up - toward * (up @ toward)
    if np.linalg.norm(up) < 1e-9:
        alt = np.array([0.0, 0.0, 1.0]) if abs(toward[2]) < 0.9 else np.array([0.0, 1.0, 0.0])
        up = alt - toward * (alt @ toward)
    return _unit(up)


def _box(points: np.ndarray, toward: np.ndarray, up: np.ndarray) -> tuple[float, float, np.ndarray]:
    right = np.cross(up, toward)
    u, r = points @ up, points @ right
    centre2 = np.array([(r.max() + r.min()) / 2, (u.max() + u.min()) / 2])
    mean_depth = float((points @ toward).mean())
    centre = right * centre2[0] + up * centre2[1] + toward * mean_depth
    return float(r.max() - r.min()), float(u.max() - u.min()), centre


def mean_normal(normals: np.ndarray, areas: np.ndarray | None = None) -> np.ndarray:
    """Area-weighted mean of unit cell normals; +z when they cancel."""
    total = (normals * (areas[:, None] if areas is not None else 1.0)).sum(axis=0)
    return _unit(total) if np.linalg.norm(total) > 1e-12 * len(normals) else np.array([0.0, 0.0, 1.0])


def orient(view: str, points: np.ndarray, normal: np.ndarray | None = None) -> Orientation:
    """The orientation of a named view of a model (``points``: its nodes; ``normal``: the mean cell normal)."""
    if view in DIRECTIONS:
        toward, up0 = (_unit(v) for v in DIRECTIONS[view])
    elif view in ("+normal", "-normal"):
        n = normal if normal is not None else np.array([0.0, 0.0, 1.0])
        toward = _unit(n) * (1.0 if view == "+normal" else -1.0)
        up0 = np.array([0.0, 1.0, 0.0]) if abs(toward[1]) < 0.9 else np.array([0.0, 0.0, 1.0])
    else:
        raise ValueError(f"unknown view {view!r}; use one of {', '.join(NAMED)}")
    up = _perpendicular_up(toward, up0)
    w, h, centre = _box(points, toward, up)
    rolled = _rolled_up(points, toward, up)
    rw, rh, rcentre = _box(points, toward, rolled)
    if w * h > ROLL_GAIN * rw * rh:
        return Orientation(toward, rolled, (rw, rh), rcentre)
    return Orientation(toward, up, (w, h), centre)


def _rolled_up(points: np.ndarray, toward: np.ndarray, up: np.ndarray) -> np.ndarray:
    """View-up that puts the principal axis of the model's outline on screen across the picture."""
    right = np.cross(up, toward)
    xy = np.column_stack([points @ right, points @ up])
    xy = xy - xy.mean(axis=0)
    w, v = np.linalg.eigh(xy.T @ xy)
    major = v[:, np.argmax(w)]
    axis3 = right * major[0] + up * major[1]
    new_up = _unit(np.cross(toward, axis3))
    return new_up if new_up @ up >= 0 else -new_up


def fit(o: Orientation, points: np.ndarray, aspect: float) -> Camera:
    """A parallel camera of orientation ``o`` showing the whole model in a viewport of width/height ``aspect``."""
    w, h = o.extent
    scale = max(h / 2.0, w / (2.0 * aspect), 1e-12) / (1.0 - 2.0 * MARGIN)
    rel = (points - o.centre) @ o.toward      # height of every node above the focal plane, toward the camera
    pad = 0.01 * (float(np.ptp(rel)) + max(w, h)) + 1e-9
    distance = float(rel.max()) + scale + pad
    position = o.centre + o.toward * distance
    clip = (max(distance - float(rel.max()) - pad, 1e-9), distance - float(rel.min()) + pad)
    return Camera(tuple(position), tuple(o.centre), tuple(o.up), True, float(scale), clip)


def close_up(centre: np.ndarray, normal: np.ndarray, radius: float, aspect: float, axis: np.ndarray,
             points: np.ndarray | None = None) -> Camera:
    """A parallel camera looking at ``centre`` along ``normal`` (from the side it points to).

    Parameters
    ----------
    centre, normal : (3,)
        The cell's centre and unit normal.
    radius : float
        The neighbourhood shown: half the smaller side of the viewport (model units).
    aspect : float
        Viewport width / height.
    axis : (3,)
        A model direction to lay across the picture (the model's long axis) where it is not along the normal.
    points : (npoint, 3), optional
        The model's nodes: where the cell is near an edge of the model, the view slides (keeping the cell in
        it) to show model rather than empty background.
    """
    n = _unit(normal)
    centre = np.asarray(centre, float)
    up = _perpendicular_up(n, np.cross(n, axis) if np.linalg.norm(np.cross(n, axis)) > 1e-6 else (0, 0, 1))
    scale = radius / min(aspect, 1.0)
    half = (scale * aspect, scale)
    focal = centre.copy()
    if points is not None:
        right = np.cross(-n, up)
        near = points[np.abs((points - centre) @ n) <= radius]
        for direction, h in zip((right, up), half):
            s = (near - centre) @ direction if len(near) else np.zeros(1)
            lo, hi = float(s.min()), float(s.max())
            shift = float(np.clip(0.0, lo + h, hi - h)) if hi - lo > 2 * h else (lo + hi) / 2
            focal = focal + direction * float(np.clip(shift, -0.8 * h, 0.8 * h))
    distance = 4.0 * radius
    position = focal + n * distance
    return Camera(tuple(position), tuple(focal), tuple(up), True, float(scale), (distance - radius, distance + radius))


def long_axis(points: np.ndarray) -> np.ndarray:
    """Unit principal axis of a point cloud (the direction of largest spread)."""
    p = points - points.mean(axis=0)
    w, v = np.linalg.eigh(p.T @ p)
    return v[:, np.argmax(w)]


def grid_columns(aspects, width: float, height: float) -> int:
    """Columns of a grid of views (width/height ``aspects``) in a ``width`` × ``height`` area that show the
    models largest: the sum of the areas they cover when each row is as high as its tallest view needs at the
    column width, all rows shrunk together to fit ``height``."""
    n = len(aspects)
    best, cols = -1.0, 1
    for c in range(1, n + 1):
        w = width / c
        rows = [aspects[r:r + c] for r in range(0, n, c)]
        want = [w / min(row) for row in rows]
        s = min(1.0, height / sum(want))
        area = sum(min(w, h * s * a) * min(h * s, w / a) for row, h in zip(rows, want) for a in row)
        if area > best * (1 + 1e-9):
            best, cols = area, c
    return cols
