"""Colour maps and categorical palettes of plybridge pictures.

Three kinds of field, three kinds of map:

- ``sequential`` (strength ratios, magnitudes): matplotlib's perceptually
  uniform ``viridis`` (no greys in it, so the "no value" grey stays distinct);
- ``diverging`` (margins of safety, signed stresses): our own map
  ``plybridge-balance``, deep brick red below zero through a pale stone at zero
  to deep teal above, resampled so that **zero sits at the pale centre whatever
  the limits** (a two-slope scale: below and above zero are stretched
  separately), so a negative margin always reads red;
- ``categorical`` (critical ply, criterion, mode, case): our own palette of
  twelve distinguishable hues, cycled (darkened) beyond twelve.

Cells without a value (NaN: flagged, past the ply count, not computed) are drawn
in :data:`NO_VALUE`, a neutral grey that none of the maps contains.
All functions are pure; nothing here keeps state.
"""

from __future__ import annotations

import numpy as np

#: Colour of cells without a value.
NO_VALUE = "#8c8c8c"
#: Edge and outline colour.
EDGE = "#3a3a3a"
#: Marker colour of the worst cell.
MARK = "#ff2fa0"
#: Sequential map (matplotlib name).
SEQUENTIAL = "viridis"

#: Anchor colours of the diverging map, from the negative end through zero to the positive end.
BALANCE = ("#7a1020", "#c8462c", "#f1b27a", "#f3efe6", "#8fcfc4", "#2b8c8c", "#0c3f55")

#: Our categorical palette (hex, sRGB).
PALETTE = ("#1f6fb2", "#e8892b", "#3a9d5d", "#c8334a", "#8656b8", "#7d5a44",
           "#d66fb5", "#2fb7c9", "#b8b23a", "#274060", "#f2c14e", "#5c8f2d")

KINDS = ("sequential", "diverging", "categorical")


def hex_to_rgb(colour: str) -> np.ndarray:
    """``"#rrggbb"`` → float RGB in [0, 1], shape (3,)."""
    c = colour.lstrip("#")
    return np.array([int(c[i:i + 2], 16) / 255.0 for i in (0, 2, 4)])


def rgb_to_hex(rgb) -> str:
    """Float RGB in [0, 1] → ``"#rrggbb"``."""
    r, g, b = (int(round(float(np.clip(v, 0.0, 1.0)) * 255)) for v in rgb[:3])
    return f"#{r:02x}{g:02x}{b:02x}"


def balance_map():
    """The diverging map ``plybridge-balance`` (a matplotlib colormap, position 0.5 is zero)."""
    from matplotlib.colors import LinearSegmentedColormap

    return LinearSegmentedColormap.from_list("plybridge-balance", list(BALANCE), N=256)


def diverging_limits(values: np.ndarray, cap: float | None = None) -> tuple[float, float]:
    """Colour limits of a diverging field: the finite range widened to include zero.

    A field that is all positive gets ``(0, max)`` (zero at the pale end), all
    negative ``(min, 0)``; an all-zero or empty field ``(-1, 1)``. With ``cap``
    the upper limit is at most ``cap`` (larger values take the end colour), so
    that a few very large margins do not wash out the low ones a reviewer looks for.
    """
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    lo = min(float(v.min()), 0.0) if v.size else 0.0
    hi = max(float(v.max()), 0.0) if v.size else 0.0
    if cap is not None:
        hi = min(hi, cap)
    if lo == hi:
        return -1.0, 1.0
    return lo, hi


def balance_position(values, lo: float, hi: float) -> np.ndarray:
    """Position in the balance map (0 … 1, zero at 0.5) of ``values`` on limits ``lo ≤ 0 ≤ hi``."""
    v = np.clip(np.asarray(values, dtype=float), lo, hi)
    pos = np.full(v.shape, 0.5)
    if hi > 0:
        pos = np.where(v > 0, 0.5 + 0.5 * v / hi, pos)
    if lo < 0:
        pos = np.where(v < 0, 0.5 - 0.5 * v / lo, pos)
    return pos


def diverging_lut(lo: float, hi: float, n: int = 256):
    """A linear lookup map on ``[lo, hi]`` that reproduces the two-slope balance scale.

    Entry i colours the value ``lo + (i + ½)·(hi − lo)/n`` as the balance map at
    :func:`balance_position`, so a renderer with plain linear limits (a scalar
    bar with true tick values) still puts zero at the pale centre.
    """
    from matplotlib.colors import ListedColormap

    centres = lo + (np.arange(n) + 0.5) * (hi - lo) / n
    return ListedColormap(balance_map()(balance_position(centres, lo, hi))[:, :3], name="plybridge-balance-2slope")


def palette(n: int) -> list[str]:
    """``n`` categorical colours: :data:`PALETTE`, then the same hues darkened on each further cycle."""
    out = []
    for i in range(n):
        base = hex_to_rgb(PALETTE[i % len(PALETTE)])
        out.append(rgb_to_hex(base * (0.7 ** (i // len(PALETTE)))))
    return out


def categorical_lut(n: int):
    """A matplotlib ListedColormap of :func:`palette` (one entry per category, limits −½ … n − ½)."""
    from matplotlib.colors import ListedColormap

    return ListedColormap([hex_to_rgb(c) for c in palette(max(n, 1))], name="plybridge-categories")


def expected_colour(kind: str, value: float, limits: tuple[float, float], n_categories: int = 0) -> np.ndarray:
    """The RGB (0 … 1) a field value is drawn with (NaN → :data:`NO_VALUE`), for checks and legends.

    Parameters
    ----------
    kind : {"sequential", "diverging", "categorical"}
    value : float
        The cell value (a category index for ``categorical``).
    limits : (float, float)
        Colour limits (ignored for ``categorical``).
    n_categories : int
        Number of categories (``categorical`` only).
    """
    if not np.isfinite(value):
        return hex_to_rgb(NO_VALUE)
    if kind == "categorical":
        return hex_to_rgb(palette(max(n_categories, int(value) + 1))[int(value)])
    lo, hi = limits
    if kind == "diverging":
        return np.asarray(balance_map()(float(balance_position(value, lo, hi)))[:3])
    import matplotlib

    t = 0.5 if hi == lo else (min(max(value, lo), hi) - lo) / (hi - lo)
    return np.asarray(matplotlib.colormaps[SEQUENTIAL](t)[:3])
