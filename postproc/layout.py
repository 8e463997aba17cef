"""How a map picture is laid out and put together: title band, views, captions, colour bar and legend.

Every text is drawn as written (``parse_math=False``: a ``$`` in a user's name is a dollar sign).

The picture is planned in reserved boxes that never overlap: a title band at the top; the views in a grid,
each with a caption strip under it; the colour bar and the legend either in a margin on the right or, when the
views are wide (a slender model), in a band at the bottom. Views are rendered to the exact size of their box
and pasted in unchanged; everything else (text, colour bar, legend, the marker and label of the worst cell) is
drawn by matplotlib on a transparent layer laid over them, so a model pixel keeps its map colour wherever no
marker is drawn on it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from . import colors
from .cameras import grid_columns
from .legend import CHAR, LINE, ColourBar, Legend, flow, text_width

#: Default picture width (px) when no size is given; the height then follows the model.
DEFAULT_WIDTH = 1600
#: Views whose block is wider than this (width / height) put the colour bar and legend in a bottom band.
WIDE = 2.4
#: A bottom-band legend of at most this many lines goes beside the colour bar instead of under it.
SHORT = 3
#: Picture aspect aimed at when the views are arranged and no size is given.
TARGET_ASPECT = 16 / 9


@dataclass(frozen=True)
class Box:
    """A rectangle of the picture in pixels: top row, left column, height, width."""

    top: int
    left: int
    height: int
    width: int

    @property
    def slices(self) -> tuple[slice, slice]:
        return slice(self.top, self.top + self.height), slice(self.left, self.left + self.width)


@dataclass(frozen=True)
class Plan:
    size: tuple[int, int]            # width, height
    font: float                      # px
    title: Box
    views: tuple[Box, ...]
    captions: tuple[Box, ...]
    bar: Box | None
    legend: Box | None
    legend_columns: int
    placement: str                   # "right" or "bottom"


def _font(width: int) -> float:
    return float(np.clip(width / 100.0, 10.0, 17.0))


def plan(aspects: Sequence[float], size: tuple[int, int] | None, legend: Legend | None,
         bar: ColourBar | None) -> Plan:
    """Boxes for ``len(aspects)`` views of the given width/height, a legend and a colour bar.

    With ``size`` None the width is :data:`DEFAULT_WIDTH` and the height follows the views and the legend.
    """
    W = int(size[0]) if size else DEFAULT_WIDTH
    font = _font(W)
    n = len(aspects)
    aspect = float(np.clip(np.median(aspects), 0.5, 12.0))
    title_h = int(round(2 * LINE * font + 0.8 * font))
    cap_h = int(round(LINE * font + 0.6 * font))
    gap = int(round(0.8 * font))
    lines = legend.lines() if legend else []
    label_w = max((text_width(t, font) + (0 if head else 2.2 * font) for t, _, head in lines), default=0.0) + font
    bar_w = 8.5 * font if bar else 0.0
    side_w = 0 if not (lines or bar) else int(min(0.42 * W, max(bar_w, label_w, 10 * font)))
    area_h = (W - side_w) / TARGET_ASPECT if size is None else max(size[1] - title_h, 1)
    cols = grid_columns([float(np.clip(a, 0.25, 12.0)) for a in aspects], W - side_w, area_h)
    rows = -(-n // cols)
    placement = "bottom" if (lines or bar) and cols * aspect / rows >= WIDE else "right"
    if placement == "bottom":
        side_w = 0
    views_w = W - side_w - (gap if side_w else 0)
    vw = int((views_w - 2 * gap - (cols - 1) * gap) / cols)
    band_cols = max(1, int((W - 2 * gap) // max(label_w, 1.0))) if lines else 1
    band_h = 0
    if placement == "bottom":
        band_rows = -(-len(lines) // band_cols) + (1 if band_cols > 1 else 0)   # room for a "continued" heading
        beside = bar and 0 < len(lines) <= SHORT                                  # a short legend beside the bar
        band_h = int((4.8 * font if bar else 0) + (band_rows * LINE * font if lines and not beside else 0) + gap)
    # Each row as high as its tallest view needs at the column width.
    want = [vw / float(np.clip(min(aspects[r * cols:(r + 1) * cols]), 0.5, 12.0)) for r in range(rows)]
    fixed = title_h + rows * cap_h + (rows - 1) * gap + band_h + gap
    if size is None:
        heights = [int(round(h)) for h in want]
        H = fixed + sum(heights)
        if placement == "right":
            need = int((13 * font if bar else 0) + len(lines) * LINE * font + 2 * gap + title_h)
            extra = min(need, int(1.2 * W)) - H
            if extra > 0:
                heights = [h + extra // rows for h in heights]
                H = fixed + sum(heights)
    else:
        H = int(size[1])
        heights = [int((H - fixed) * h / sum(want)) for h in want]
    if vw < 16 or min(heights) < 16:
        raise ValueError(f"a picture of {W}x{H} pixels leaves no room for {n} view(s); give a larger --size")
    block_h = sum(heights) + rows * cap_h + (rows - 1) * gap
    left0 = gap + (views_w - 2 * gap - cols * vw - (cols - 1) * gap) // 2
    views, captions = [], []
    for k in range(n):
        r, c = divmod(k, cols)
        top = title_h + sum(heights[:r]) + r * (cap_h + gap)
        left = left0 + c * (vw + gap)
        views.append(Box(top, left, heights[r], vw))
        captions.append(Box(top + heights[r], left, cap_h, vw))
    bar_box = legend_box = None
    legend_cols = 1
    if placement == "right" and (bar or lines):
        left = W - side_w
        avail = H - title_h - gap
        bar_h = int(min(max(0.45 * avail, 10 * font), 22 * font)) if bar else 0
        if bar:
            bar_box = Box(title_h, left, bar_h, side_w - gap)
        if lines:
            top = title_h + bar_h + (gap if bar else 0)
            legend_box = Box(top, left, H - top - gap, side_w - gap)
            legend_cols, _ = flow(len(lines), int(legend_box.height // (LINE * font)))
    elif placement == "bottom":
        top = title_h + block_h + gap // 2
        if bar and beside:
            bar_box = Box(top, int(3 * font), int(4.8 * font), int(0.55 * W - 3 * font))   # room for the end label
            legend_box = Box(top + int(0.6 * font), int(0.6 * W), int(4.2 * font), int(0.4 * W) - gap)
        else:
            if bar:
                bar_box = Box(top, gap + W // 5, int(4.8 * font), int(0.6 * W) - gap)
                top += int(4.8 * font)
            if lines:
                legend_box = Box(top, gap, H - top - gap // 2, W - 2 * gap)
                legend_cols = band_cols
    return Plan((W, H), font, Box(0, 0, title_h, W), tuple(views), tuple(captions), bar_box, legend_box,
                legend_cols, placement)


@dataclass(frozen=True)
class Mark:
    """The worst cell in one view: its pixel, whether it is visible there, its label and the label's box.

    ``spot`` (top, left, height, width in the view) lies on empty background; None: the caption carries the label.
    """

    pixel: tuple[int, int]
    visible: bool
    label: str
    spot: tuple[int, int, int, int] | None = None


def _pt(px: float) -> float:
    return px * 72.0 / 100.0


def compose(p: Plan, images: Sequence[np.ndarray], title: Sequence[str],
            captions: Sequence[str], legend: Legend | None, bar: ColourBar | None,
            marks: Sequence[Mark | None]) -> np.ndarray:
    """The finished RGB picture: views pasted into their boxes, everything else drawn over them."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    W, H = p.size
    canvas = np.full((H, W, 3), 255, dtype=np.uint8)
    for box, img in zip(p.views, images):
        canvas[box.slices] = img
    fig = Figure(figsize=(W / 100.0, H / 100.0), dpi=100)
    agg = FigureCanvasAgg(fig)
    fig.patch.set_alpha(0.0)
    renderer = agg.get_renderer()
    _title(fig, renderer, p, title)
    for box, text in zip(p.captions, captions):
        _fit_text(fig, renderer, p, box, text, p.font * 0.95, colors.INK_MUTED)
    if bar is not None and p.bar is not None:
        _colour_bar(fig, p, bar)
    if legend is not None and p.legend is not None:
        _legend(fig, renderer, p, legend)
    for box, mark in zip(p.views, marks):
        if mark is not None and mark.visible:
            _mark(fig, p, box, mark)
    agg.draw()
    over = np.asarray(agg.buffer_rgba()).astype(float) / 255.0
    alpha = over[..., 3:4]
    out = canvas.astype(float) / 255.0 * (1.0 - alpha) + over[..., :3] * alpha
    return np.clip(np.round(out * 255.0), 0, 255).astype(np.uint8)


def _xy(p: Plan, row: float, col: float) -> tuple[float, float]:
    W, H = p.size
    return col / W, 1.0 - row / H


def _fit_text(fig, renderer, p: Plan, box: Box, text: str, font: float, colour: str, weight: str = "normal",
              row: float | None = None) -> None:
    """One line of text at the left of ``box``, shrunk (down to 60 %) to fit its width, else cut with …."""
    x, y = _xy(p, (box.top + box.height / 2) if row is None else row, box.left + 0.3 * font)
    t = fig.text(x, y, text, fontsize=_pt(font), color=colour, va="center", ha="left", weight=weight,
                 parse_math=False)
    size = font
    while t.get_window_extent(renderer).width > box.width - 0.6 * font and size > 0.6 * font:
        size *= 0.92
        t.set_fontsize(_pt(size))
    while t.get_window_extent(renderer).width > box.width - 0.6 * font and len(t.get_text()) > 4:
        t.set_text(t.get_text()[:-2] + "…")


def _title(fig, renderer, p: Plan, lines: Sequence[str]) -> None:
    for k, line in enumerate(lines[:2]):
        row = p.title.top + (0.5 + k) * LINE * p.font * (1.1 if k == 0 else 1.0) + 0.3 * p.font
        _fit_text(fig, renderer, p, p.title, line, p.font * (1.2 if k == 0 else 1.0), colors.INK,
                  "bold" if k == 0 else "normal", row=row)


def _colour_bar(fig, p: Plan, bar: ColourBar) -> None:
    box = p.bar
    W, H = p.size
    f = p.font
    if p.placement == "right":
        rect = (box.left + 0.6 * f, box.top + 2.6 * f, 1.6 * f, box.height - 3.6 * f)
        orientation = "vertical"
    else:
        rect = (box.left, box.top + 1.9 * f, box.width, 1.2 * f)
        orientation = "horizontal"
    left, top, w, h = rect
    ax = fig.add_axes((left / W, 1.0 - (top + h) / H, w / W, h / H))
    cmap, norm = colors.colour_scale(bar.kind, bar.limits)
    from matplotlib.cm import ScalarMappable

    cb = fig.colorbar(ScalarMappable(norm=norm, cmap=cmap), cax=ax, orientation=orientation)
    length = h if orientation == "vertical" else w
    label = max(len(bar.tick_label(v)) for v in bar.limits) + 1
    ticks = bar.ticks(max(0.06, (1.6 * f if orientation == "vertical" else label * CHAR * 0.9 * f) / length))
    cb.set_ticks(ticks, labels=[bar.tick_label(t) for t in ticks])
    cb.ax.tick_params(labelsize=_pt(0.9 * f), colors=colors.INK)
    cb.outline.set_edgecolor(colors.INK_MUTED)
    x, y = _xy(p, box.top + 0.9 * f, box.left + 0.3 * f)
    fig.text(x, y, bar.title, fontsize=_pt(f), color=colors.INK, va="center", ha="left", parse_math=False)


def _legend(fig, renderer, p: Plan, legend: Legend) -> None:
    from matplotlib.patches import Rectangle

    box = p.legend
    W, H = p.size
    lines = legend.lines()
    cols = p.legend_columns
    font = p.font
    rows_fit = int(box.height // (LINE * font))
    while cols * rows_fit < len(lines) + cols - 1 and font > 0.7 * p.font:
        font *= 0.92
        rows_fit = int(box.height // (LINE * font))
    shown = columns(lines, cols, max(rows_fit, 1))
    col_w = box.width / max(cols, 1)
    for c, column in enumerate(shown):
        for r, (text, colour, heading) in enumerate(column):
            row = box.top + (r + 0.5) * LINE * font
            left = box.left + c * col_w
            if colour is not None:
                s = 1.0 * font
                fig.add_artist(Rectangle((left / W, 1.0 - (row + s / 2) / H), s / W, s / H, transform=fig.transFigure,
                                         facecolor=colour, edgecolor=colors.INK_MUTED, linewidth=0.5))
                left += 1.5 * font
            sub = Box(int(row - LINE * font / 2), int(left), int(LINE * font), int(col_w - (left - box.left - c * col_w)))
            _fit_text(fig, renderer, p, sub, text, font, colors.INK, "bold" if heading else "normal", row=row)


def _mark(fig, p: Plan, box: Box, mark: Mark) -> None:
    """A ring on the cell, and its label with a leader line where :attr:`Mark.spot` found room."""
    from matplotlib.lines import Line2D

    W, H = p.size
    f = p.font
    r, c = mark.pixel
    ring = max(0.7 * f, 6.0)
    x, y = _xy(p, box.top + r, box.left + c)
    fig.add_artist(Line2D([x], [y], marker="o", markersize=_pt(2 * ring), markerfacecolor="none",
                          markeredgecolor=colors.MARK, markeredgewidth=2.2, transform=fig.transFigure))
    if mark.spot is None:
        return
    top, left, h, w = mark.spot
    lx, ly = _xy(p, box.top + top + h / 2, box.left + left + 0.5 * f)
    fig.add_artist(Line2D([x, _xy(p, 0, box.left + left + (0 if left > c else w))[0]], [y, ly], color=colors.MARK,
                          linewidth=1.2, transform=fig.transFigure))
    fig.text(lx, ly, mark.label, fontsize=_pt(f), color=colors.INK, va="center", ha="left", parse_math=False,
             bbox=dict(boxstyle="round,pad=0.25", facecolor="white", edgecolor=colors.MARK, linewidth=1.0))


def columns(lines: list, cols: int, rows: int) -> list[list]:
    """Legend lines flowed into ``cols`` columns of at most ``rows``; a group cut by a column break has its
    heading repeated (``… (continued)``), never an untitled group's (its blank heading ends the group before);
    what does not fit ends in a line saying how many more there are."""
    out: list[list] = [[]]
    heading = None
    for k, (text, colour, head) in enumerate(lines):
        if head:
            heading = text
        if len(out[-1]) >= rows or (head and len(out[-1]) >= rows - 1):
            if len(out) == cols:
                rest = len(lines) - k + 1
                out[-1][-1] = (f"… {rest} more (listed in the command's output)", None, True)
                return out
            out.append([])
            if not head and heading:
                out[-1].append((f"{heading} (continued)", None, True))
        if head and not text and not out[-1]:
            continue                                    # a blank separator never opens a column
        out[-1].append((text, colour, head))
    return out


def free_spot(mask: np.ndarray, pixel: tuple[int, int], size: tuple[int, int], font: float):
    """(top, left, height, width) of a box of ``size`` near ``pixel`` covering no model pixel, or None."""
    h, w = size
    rows, cols = mask.shape
    r0, c0 = pixel
    for dist in (2.5, 4, 6, 9, 13, 18):
        d = dist * font
        for dr, dc in ((-1, 1), (1, 1), (-1, -1), (1, -1), (-1, 0), (1, 0), (0, 1), (0, -1)):
            top = int(r0 + dr * d - (h / 2 if dr == 0 else (h if dr < 0 else 0)))
            left = int(c0 + dc * d - (w / 2 if dc == 0 else (w if dc < 0 else 0)))
            if top < 2 or left < 2 or top + h > rows - 2 or left + w > cols - 2:
                continue
            if not mask[top:top + h, left:left + w].any():
                return top, left, h, w
    return None


__all__ = ["Box", "Plan", "Mark", "plan", "compose", "free_spot", "CHAR"]
