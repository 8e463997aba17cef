"""Colour maps and categorical palettes of plybridge pictures.

Three kinds of field, three kinds of map:

- ``sequential`` (strength ratios, magnitudes): matplotlib's perceptually
  uniform ``viridis`` (no greys in it, so the "no value" grey stays distinct);
- ``diverging`` (margins of safety, signed stresses): our own map
  ``plybridge-balance``, deep brick red below zero through a pale stone at zero
  to deep teal above, resampled so that **zero sits at the pale centre whatever
  the limits** (a two-slope scale: below and above zero are stretched
  separately), so a negative margin always reads red;
- ``categorical`` (critical ply, criterion, mode, case): our own palette, built
  in the OKLab perceptual space (Ottosson 2020) by farthest-point selection:
  each next colour is the in-gamut candidate farthest from every colour taken
  before it (and from the worst-cell mark, the no-value grey and the white
  page), so any n first colours are as far apart as the sequence allows, and
  categories listed together (the plies of one zone) never share a hue and
  lightness.

Cells without a value (NaN: flagged, past the ply count, not computed) are drawn
in :data:`NO_VALUE`, a neutral grey that none of the maps contains.
All functions are pure; nothing here keeps state.
"""

from __future__ import annotations

import functools

import numpy as np

#: Colour of cells without a value.
NO_VALUE = "#8c8c8c"
#: Edge and outline colour.
EDGE = "#3a3a3a"
#: Marker colour of the worst cell.
MARK = "#ff2fa0"
#: Text colours of pictures (main text, captions and notes).
INK, INK_MUTED = "#1d232a", "#4f5963"
#: Sequential map (matplotlib name).
SEQUENTIAL = "viridis"

#: Anchor colours of the diverging map, from the negative end through zero to the positive end.
BALANCE = ("#7a1020", "#c8462c", "#f1b27a", "#f3efe6", "#8fcfc4", "#2b8c8c", "#0c3f55")

#: Categorical palette: candidates on an OKLab grid (lightness range, chroma range, grid steps), kept away from
#: the page, the mark and the no-value grey.
_LIGHTNESS, _CHROMA, _GRID = (0.40, 0.82), (0.05, 0.20), (15, 33)

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


_LMS_TO_LINEAR = np.array([[4.0767416621, -3.3077115913, 0.2309699292],
                           [-1.2684380046, 2.6097574011, -0.3413193965],
                           [-0.0041960863, -0.7034186147, 1.7076147010]])
_LAB_TO_LMS = np.array([[1.0, 0.3963377774, 0.2158037573],
                        [1.0, -0.1055613458, -0.0638541728],
                        [1.0, -0.0894841775, -1.2914855480]])


_RGB_TO_LMS = np.array([[0.4122214708, 0.5363325363, 0.0514459929],
                        [0.2119034982, 0.6806995451, 0.1073969566],
                        [0.0883024619, 0.2817188376, 0.6299787005]])
_LMS_TO_LAB = np.array([[0.2104542553, 0.7936177850, -0.0040720468],
                        [1.9779984951, -2.4285922050, 0.4505937099],
                        [0.0259040371, 0.7827717662, -0.8086757660]])


def to_oklab(colours) -> np.ndarray:
    """OKLab (L, a, b) of ``#rrggbb`` colours, shape (n, 3) (Ottosson 2020: sRGB decoded to linear light,
    LMS by a linear map, cube root, OKLab by a second linear map). Euclidean distance is the perceptual
    difference (about 0.02 just noticeable)."""
    rgb = np.array([hex_to_rgb(c) for c in colours])
    linear = np.where(rgb <= 0.04045, rgb / 12.92, ((rgb + 0.055) / 1.055) ** 2.4)
    return (_LMS_TO_LAB @ np.cbrt(_RGB_TO_LMS @ linear.T)).T


@functools.lru_cache(maxsize=8)
def _sequence(n: int) -> tuple[str, ...]:
    """The first ``n`` colours of the farthest-point sequence (see the module notes)."""
    lightness = np.linspace(*_LIGHTNESS, _GRID[0])
    ab = np.linspace(-_CHROMA[1], _CHROMA[1], _GRID[1])
    L, a, b = np.meshgrid(lightness, ab, ab, indexing="ij")
    lab = np.stack([L.ravel(), a.ravel(), b.ravel()], axis=1)
    chroma = np.hypot(lab[:, 1], lab[:, 2])
    lab = lab[(chroma >= _CHROMA[0]) & (chroma <= _CHROMA[1])]
    linear = (_LMS_TO_LINEAR @ ((_LAB_TO_LMS @ lab.T) ** 3)).T
    lab = lab[np.all((linear >= 0.0) & (linear <= 1.0), axis=1)]           # inside the sRGB gamut
    avoid = to_oklab([MARK, NO_VALUE, "#ffffff"])
    gap = np.min(np.linalg.norm(lab[:, None, :] - avoid[None], axis=-1), axis=1)
    out = []
    for _ in range(n):
        j = int(np.argmax(gap))
        out.append(lab[j])
        gap = np.minimum(gap, np.linalg.norm(lab - lab[j], axis=1))
    linear = np.clip((_LMS_TO_LINEAR @ ((_LAB_TO_LMS @ np.array(out).reshape(-1, 3).T) ** 3)).T, 0.0, 1.0)
    encoded = np.where(linear <= 0.0031308, 12.92 * linear, 1.055 * linear ** (1 / 2.4) - 0.055)
    return tuple(rgb_to_hex(c) for c in encoded)


def palette(n: int) -> list[str]:
    """``n`` categorical colours (hex), the first ``n`` of one fixed sequence (so ``palette(k)`` starts
    ``palette(n)`` for k < n): each the in-gamut OKLab colour farthest from all before it."""
    if n <= 0:
        return []
    return list(_sequence(max(int(n), 12))[:n])


#: The first twelve categorical colours (hex, sRGB).
PALETTE = tuple(palette(12))


def categorical_lut(n: int):
    """A matplotlib ListedColormap of :func:`palette` (one entry per category, limits −½ … n − ½)."""
    from matplotlib.colors import ListedColormap

    return ListedColormap([hex_to_rgb(c) for c in palette(max(n, 1))], name="plybridge-categories")


def colour_scale(kind: str, limits: tuple[float, float]):
    """(matplotlib colormap, norm) drawing ``kind`` on ``limits`` as the cells are coloured (for colour bars).

    A diverging field spanning zero gets a two-slope norm with zero at the pale centre; an all-positive
    (all-negative) one the upper (lower) half of the balance map.
    """
    from matplotlib.colors import ListedColormap, Normalize, TwoSlopeNorm

    lo, hi = limits
    if kind == "sequential":
        import matplotlib

        return matplotlib.colormaps[SEQUENTIAL], Normalize(lo, hi)
    full = balance_map()
    if lo < 0 < hi:
        return full, TwoSlopeNorm(0.0, lo, hi)
    half = np.linspace(0.5, 1.0, 128) if lo >= 0 else np.linspace(0.0, 0.5, 128)
    return ListedColormap(full(half)), Normalize(lo, hi)


def cell_rgb(kind: str, values: np.ndarray, limits: tuple[float, float] | None, n_categories: int = 0) -> np.ndarray:
    """(ncell, 3) uint8 colours of field values, exactly as the maps draw them (NaN → :data:`NO_VALUE`)."""
    v = np.asarray(values, dtype=float)
    out = np.empty((v.size, 3))
    ok = np.isfinite(v)
    out[~ok] = hex_to_rgb(NO_VALUE)
    if kind == "categorical":
        pal = np.array([hex_to_rgb(c) for c in palette(max(n_categories, 1))])
        out[ok] = pal[v[ok].astype(int)]
    elif kind == "diverging":
        lo, hi = limits
        out[ok] = balance_map()(balance_position(v[ok], lo, hi))[:, :3]
    else:
        import matplotlib

        lo, hi = limits
        t = np.clip((v[ok] - lo) / (hi - lo), 0.0, 1.0) if hi > lo else np.full(ok.sum(), 0.5)
        out[ok] = matplotlib.colormaps[SEQUENTIAL](t)[:, :3]
    return np.round(out * 255.0).astype(np.uint8)


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
