"""Matplotlib figures: polar moduli and failure envelopes (the through-thickness figure: :mod:`postproc.profile`).

Figures are built as :class:`matplotlib.figure.Figure` objects on the Agg
canvas, never through ``pyplot``: nothing is registered globally, so nothing
stays open; callers save them with :func:`save_figure` and drop them. Every text is drawn as written
(:func:`literal_text`: a ``$`` in a user's name is a dollar sign, shown without any escape). Colours come
from :mod:`postproc.colors`.
"""

from __future__ import annotations

from typing import Callable, Mapping, Sequence

import numpy as np

from . import colors

def new_figure(width: float = 10.0, height: float = 6.0):
    """A Figure on the Agg canvas (not registered with pyplot)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width, height), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def literal_text(fig) -> None:
    """Draw every text of ``fig`` as written: no mathtext, so a ``$`` in a user's name is a dollar sign.

    The one place plot labels are made safe (titles, axis labels, legends, annotations), applied by
    :func:`save_figure` to whatever the figure functions wrote.
    """
    from matplotlib.text import Text

    for text in fig.findobj(Text):
        text.set_parse_math(False)


def save_figure(fig, path, fmt: str) -> None:
    """Save ``fig`` to ``path`` (a path or a binary file object) as ``png`` or ``svg``; labels drawn literally."""
    literal_text(fig)
    fig.savefig(path, format=fmt, dpi=110, facecolor="white")


def polar_figure(angles_deg: np.ndarray, membrane: np.ndarray, flexural: np.ndarray, *, title: str,
                 unit: str):
    """Membrane and flexural Young's moduli against direction (degrees from laminate x), on polar axes."""
    fig = new_figure(6.5, 6.0)
    ax = fig.add_subplot(projection="polar")
    t = np.radians(np.asarray(angles_deg, dtype=float))
    pal = colors.palette(2)
    ax.plot(t, membrane, color=pal[0], lw=2.0, label="membrane E(θ)")
    ax.plot(t, flexural, color=pal[1], lw=2.0, ls="--", label="flexural E(θ)")
    ax.set_title(f"{title}\nmoduli [{unit}] against direction from laminate x", fontsize=10)
    ax.legend(loc="lower left", bbox_to_anchor=(0.0, -0.12), fontsize=8, ncols=2)
    return fig


def trace_envelope(ratio: Callable, params: np.ndarray, plane: tuple[int, int], n: int = 361) -> np.ndarray:
    """Failure envelope of one criterion in a stress plane, traced by scanning load directions.

    Along each direction a = (sx·cos t, sy·sin t) of the plane (sx, sy: the mean
    axis intercepts, so the scan is even on an elongated envelope) (components ``plane`` of
    the six-state (σ1, σ2, τ12, τ13, τ23, σ3), every other component zero, no
    fixed stress) the strength ratio R = ``ratio(sm, sf, params)[0]`` puts the
    envelope point at R·a.

    Returns
    -------
    ndarray (n, 2)
        Envelope points (NaN where the direction never fails).
    """
    sf = np.zeros(6)

    def point(a: float, b: float) -> np.ndarray:
        sm = np.zeros(6)
        sm[plane[0]], sm[plane[1]] = a, b
        r = float(ratio(sm, sf, params)[0])
        return np.array([r * a, r * b]) if np.isfinite(r) else np.full(2, np.nan)

    # Scan evenly in the plane scaled by the axis intercepts, so a long thin envelope is sampled evenly.
    axes = np.array([point(1, 0)[0], -point(-1, 0)[0], point(0, 1)[1], -point(0, -1)[1]])
    finite = axes[np.isfinite(axes) & (axes > 0)]
    default = float(finite.mean()) if finite.size else 1.0
    sx = np.nanmean([v if np.isfinite(v) and v > 0 else default for v in axes[:2]])
    sy = np.nanmean([v if np.isfinite(v) and v > 0 else default for v in axes[2:]])
    t = np.linspace(0.0, 2.0 * np.pi, n)
    return np.array([point(sx * np.cos(a), sy * np.sin(a)) for a in t])


ENVELOPE_PLANES = (((0, 1), "σ1", "σ2"), ((1, 2), "σ2", "τ12"))
#: Line styles of successive envelope curves (with their colours), so coinciding curves stay visible (maximum
#: stress and Hashin share the σ1–σ2 rectangle when S_T comes from the fracture plane).
ENVELOPE_DASHES = ("-", (0, (5, 3)), (0, (1, 2)), (0, (6, 2, 1, 2)))


def drawable(curves: Mapping[str, Sequence[np.ndarray]]) -> dict[str, Sequence[np.ndarray]]:
    """The curves that give an envelope in at least one plane (some finite point), in order."""
    return {name: pair for name, pair in curves.items()
            if any(np.isfinite(np.asarray(pts, float)).any() for pts in pair)}


def envelope_figure(curves: Mapping[str, Sequence[np.ndarray]], states: np.ndarray | None, *, title: str,
                    unit: str, states_label: str = ""):
    """Failure envelopes in the σ1–σ2 and σ2–τ12 planes, with ply stress states overlaid.

    Parameters
    ----------
    curves : mapping criterion → (points in σ1–σ2, points in σ2–τ12)
        From :func:`trace_envelope` with :data:`ENVELOPE_PLANES`.
    states : ndarray (k, 6) or None
        Stress states (σ1, σ2, τ12, τ13, τ23, σ3) to overlay as points.
    """
    curves = drawable(curves)
    if not curves:
        raise ValueError("none of the criteria gives an envelope in the σ1–σ2 or σ2–τ12 plane for this material "
                         "(a core carries transverse shear and through-thickness stress only)")
    from matplotlib.ticker import FuncFormatter, MaxNLocator

    from .numbers import short

    fig = new_figure(12.0, 5.5)
    axes = fig.subplots(1, 2)
    pal = colors.palette(max(len(curves), 1))
    for p, (ax, (plane, xs, ys)) in enumerate(zip(axes, ENVELOPE_PLANES)):
        ax.set_prop_cycle(linestyle=ENVELOPE_DASHES)
        for j, (crit, pair) in enumerate(curves.items()):
            pts = np.asarray(pair[p])
            ax.plot(pts[:, 0], pts[:, 1], color=pal[j], lw=1.8, label=crit)
        if states is not None and len(states):
            s = np.asarray(states)
            ax.scatter(s[:, plane[0]], s[:, plane[1]], s=14, color=colors.MARK, edgecolor="black", lw=0.4,
                       zorder=5, label=states_label or "ply states")
        ax.axhline(0.0, color="black", lw=0.6)
        ax.axvline(0.0, color="black", lw=0.6)
        ax.set_xlabel(f"{xs} [{unit}]")
        ax.set_ylabel(f"{ys} [{unit}]")
        ax.set_title(f"{xs}–{ys} plane (other components zero)", fontsize=10)
        ax.grid(True, lw=0.3)
        ax.xaxis.set_major_locator(MaxNLocator(5))
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: short(v)))
        ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _: short(v)))
        ax.legend(fontsize=8, loc="upper center", bbox_to_anchor=(0.5, -0.13), ncols=4, frameon=False)
    fig.suptitle(title, fontsize=11)
    return fig
