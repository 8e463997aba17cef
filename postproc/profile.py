"""The through-thickness figure of one cell in one case: ply stresses and failure indices.

Two vertical axes are offered. ``index``: every ply gets the same height (ply 1 at the bottom), so a thick
core does not squash the faces into slivers; the core is one band, shaded and labelled with its material and
thickness. ``z``: true z (length unit), for thin monolithic stacks. Ply labels never overlap: on the ply axis
each ply has its own band; on the z axis labels are spread apart and joined to their ply by a thin line.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from . import colors
from .numbers import degrees, short, sig
from .plots import new_figure
from .run_meta import PlyInfo

#: Panels: (title, component indices into (σ1, σ2, τ12, τ13, τ23), symbols).
PANELS = (("fibre direction", (0,), ("σ1",)), ("transverse and in-plane shear", (1, 2), ("σ2", "τ12")),
          ("transverse shear", (3, 4), ("τ13", "τ23")))
MARKERS = "os^DvPX"
#: Stacks with more plies than this, or with a core, default to the ply-index axis.
THICK = 12


@dataclass(frozen=True)
class Profile:
    """Through-thickness states of one cell in one case.

    Attributes
    ----------
    z : ndarray (nply, 3)
        z of the bottom, middle and top point of every ply (length), ply 1 first.
    stress : ndarray (nply, 3, 5)
        (σ1, σ2, τ12, τ13, τ23) at those points, total (mechanical + fixed).
    failure_index : mapping str → ndarray (nply, 3)
        1/R of each criterion at those points.
    interfaces : ndarray (nply + 1,)
        Ply interfaces, bottom to top.
    plies : sequence of PlyInfo
        Material, angle (degrees) and thickness of every ply, bottom to top.
    kinds : sequence of str
        Material kind of every ply (``core`` plies are shaded as one band).
    factor_of_safety : float
        Of the case: margin zero lies at 1/R = 1/FoS, drawn beside failure at 1/R = 1.
    notes : sequence of str
        One-line notes printed under the figure (where the states came from, what is left out and why).
    """

    z: np.ndarray
    stress: np.ndarray
    failure_index: Mapping[str, np.ndarray]
    interfaces: np.ndarray
    plies: Sequence[PlyInfo]
    kinds: Sequence[str]
    factor_of_safety: float = 1.0
    notes: Sequence[str] = ()

    @property
    def has_core(self) -> bool:
        return "core" in self.kinds

    def default_axis(self) -> str:
        return "index" if self.has_core or len(self.plies) > THICK else "z"

    def labels(self, length_unit: str) -> list[str]:
        return [f"ply {k}: core {p.material}, {sig(p.thickness)} {length_unit}" if kind == "core"
                else f"ply {k}: {degrees(p.angle)}{' (wound)' if getattr(p, 'wound', 0) else ''} {p.material}"
                for k, (p, kind) in enumerate(zip(self.plies, self.kinds), start=1)]


def _y(profile: Profile, axis: str) -> tuple[np.ndarray, np.ndarray]:
    """(y of every ply point (nply, 3), y of each ply's bottom and top (nply, 2)) on the chosen axis; the two
    fibre directions of a wound ply share their place on the z axis."""
    n = len(profile.plies)
    if axis == "index":
        k = np.arange(n, dtype=float)
        return k[:, None] + np.array([0.0, 0.5, 1.0]), np.column_stack([k, k + 1.0])
    zi = np.asarray(profile.interfaces, float)
    if len(zi) == n + 1:
        edges = np.column_stack([zi[:-1], zi[1:]])
    else:                                             # wound plies: one place, two rows
        edges, j = np.empty((n, 2)), 0
        for k, p in enumerate(profile.plies):
            if getattr(p, "wound", 0) < 0:
                edges[k] = edges[k - 1]
                continue
            edges[k], j = zi[j:j + 2], j + 1
    return np.asarray(profile.z, float), edges


def spread(positions: Sequence[float], gap: float, lo: float, hi: float) -> np.ndarray:
    """Label positions moved apart to at least ``gap`` (order kept), as little as possible, within [lo, hi]."""
    p = np.asarray(positions, dtype=float)
    order = np.argsort(p)
    y = p[order].copy()
    for _ in range(200):
        moved = False
        for i in range(1, len(y)):
            overlap = gap - (y[i] - y[i - 1])
            if overlap > 1e-12:
                y[i - 1] -= overlap / 2
                y[i] += overlap / 2
                moved = True
        y = np.clip(y, lo, hi)
        if not moved:
            break
    out = np.empty_like(y)
    out[order] = y
    return out


def _broken(values: np.ndarray) -> np.ndarray:
    """(nply, 3) values as one line broken between plies (a NaN after each ply's three points)."""
    v = np.asarray(values, dtype=float)
    return np.column_stack([v, np.full(len(v), np.nan)]).ravel()


def profile_figure(profile: Profile, *, title: str, stress_unit: str, length_unit: str, axis: str | None = None):
    """σ1; σ2, τ12; τ13, τ23 and the failure index of every criterion through the thickness.

    Raises
    ------
    ValueError
        When there is nothing to plot (no finite stress at any point).
    """
    from matplotlib.ticker import FuncFormatter, MaxNLocator

    axis = axis or profile.default_axis()
    if not np.isfinite(np.asarray(profile.stress, float)).any():
        raise ValueError("no finite ply stress at this cell and case (a flagged cell, or a case with no load)")
    n = len(profile.plies)
    y, edges = _y(profile, axis)
    bounds = np.unique(edges)
    height = float(np.clip(0.24 * n + 2.6, 5.5, 16.0)) if axis == "index" else 6.0
    fig = new_figure(13.0, height)
    below = -0.55 / (height - 1.8)      # legends half an inch under each panel
    axes = fig.subplots(1, len(PANELS) + 1, sharey=True)
    pal = colors.palette(8)
    yy = _broken(y)
    stress = without_roundoff(profile.stress)
    for ax, (name, comps, symbols) in zip(axes, PANELS):
        for j, (c, sym) in enumerate(zip(comps, symbols)):
            ax.plot(_broken(stress[..., c]), yy, color=pal[j], lw=1.8, label=sym, ls="-" if j == 0 else "--")
        ax.axvline(0.0, color="black", lw=0.6)
        ax.set_title(name, fontsize=10)
        ax.set_xlabel(f"stress [{stress_unit}]")
        ax.xaxis.set_major_locator(MaxNLocator(4, symmetric=False))
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: short(v)))
        if not np.nan_to_num(stress[..., list(comps)]).any():        # nothing but zeros: say so, no noise axis
            ax.set_xlim(-1.0, 1.0)
            ax.set_xticks([0.0])
            ax.text(0.5, 0.5, "zero through\nthe thickness", transform=ax.transAxes, ha="center", va="center",
                    fontsize=9, color=colors.INK_MUTED, bbox=dict(facecolor="white", edgecolor="none"))
        ax.legend(fontsize=8, loc="upper center", bbox_to_anchor=(0.5, below), ncols=2, frameon=False)
    ax = axes[-1]
    finite_fi = [np.asarray(fi, float) for fi in profile.failure_index.values()]
    pal_fi = colors.palette(2 + len(profile.failure_index))[2:]      # none shared with the stress panels
    for j, (crit, fi) in enumerate(profile.failure_index.items()):
        ax.plot(_broken(np.asarray(fi, float)), yy, color=pal_fi[j], lw=1.6, marker=MARKERS[j % 7],
                ms=3, label=crit)
    top = max([1.05] + [1.05 * float(np.nanmax(f)) for f in finite_fi if np.isfinite(f).any()])
    ax.set_xlim(0.0, top)
    ax.axvline(1.0, color=colors.INK, lw=1.0, ls="--", label="failure: R = 1")
    fos = float(profile.factor_of_safety)
    if fos != 1.0:
        ax.axvline(1.0 / fos, color=colors.INK_MUTED, lw=1.0, ls=":", label=f"margin 0: R = FoS {fos:g}")
    if not profile.failure_index:
        ax.text(0.5, 0.5, "no failure index\n(see the note below)", transform=ax.transAxes, ha="center",
                va="center", fontsize=9, color=colors.INK_MUTED, bbox=dict(facecolor="white", edgecolor="none"))
    ax.set_title("failure index 1/R", fontsize=10)
    ax.set_xlabel("failure index [-]")
    ax.xaxis.set_major_locator(MaxNLocator(4))
    ax.legend(fontsize=8, loc="upper center", bbox_to_anchor=(0.5, below), ncols=2, frameon=False)
    for a in axes:
        a.hlines(bounds, 0, 1, transform=a.get_yaxis_transform(), color=colors.EDGE, lw=0.5, ls=":")
        for k, kind in enumerate(profile.kinds):
            if kind == "core":
                a.axhspan(edges[k, 0], edges[k, 1], color="#e6e3dc", zorder=0)
    _ply_labels(fig, axes[-1], profile, axis, edges, length_unit)
    if axis == "index":
        axes[0].set_ylabel("ply (1 = bottom), each ply the same height")
        axes[0].set_yticks(np.arange(n) + 0.5, [str(k) for k in range(1, n + 1)] if n <= 60 else [""] * n,
                           fontsize=7)
        axes[0].set_ylim(0, n)
    else:
        axes[0].set_ylabel(f"z [{length_unit}]")
    fig.suptitle(title, fontsize=11)
    if profile.notes:
        fig.supxlabel("\n".join(f"Note: {t}" for t in profile.notes), fontsize=8, x=0.01, ha="left",
                      color=colors.INK_MUTED)
    return fig


def without_roundoff(stress: np.ndarray) -> np.ndarray:
    """A copy of ply stresses (…, 5) with values within ROUNDOFF of the largest magnitude set to zero, so that
    a component that is zero up to round-off (τ13, τ23 with no transverse shear) is drawn as zero, not as an
    autoscaled distribution of 1e-17 noise (:data:`shells.recovery_tables.ROUNDOFF`)."""
    from shells.recovery_tables import ROUNDOFF

    s = np.array(stress, dtype=float)
    big = float(np.nanmax(np.abs(s), initial=0.0)) if np.isfinite(s).any() else 0.0
    s[np.abs(s) <= ROUNDOFF * big] = 0.0
    return s


def _ply_labels(fig, ax, profile: Profile, axis: str, edges: np.ndarray, length_unit: str) -> None:
    """One label per ply beside the last panel, never overlapping (every k-th ply when they cannot fit)."""
    labels = list(profile.labels(length_unit))
    mids = edges.mean(axis=1)
    fig.canvas.draw()
    bbox = ax.get_window_extent()
    lo, hi = ax.get_ylim()
    px_per_unit = bbox.height / (hi - lo)
    font = 8.0
    line_px = font * 1.35 * 100 / 72
    if axis == "index":
        step = max(1, int(np.ceil(line_px / px_per_unit)))
        for k in range(0, len(labels), step):
            ax.annotate(labels[k], xy=(1.02, mids[k]), xycoords=("axes fraction", "data"), fontsize=font,
                        va="center", annotation_clip=False)
        return
    placed = spread(mids, line_px / px_per_unit, lo, hi)
    for k, (text, mid, at) in enumerate(zip(labels, mids, placed)):
        ax.annotate(text, xy=(1.0, mid), xycoords=("axes fraction", "data"), xytext=(1.06, at),
                    textcoords=("axes fraction", "data"), fontsize=font, va="center", annotation_clip=False,
                    arrowprops=dict(arrowstyle="-", color=colors.INK_MUTED, lw=0.5) if abs(at - mid) > 1e-9
                    else None)
