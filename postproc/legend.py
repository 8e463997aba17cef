"""Legends and colour bars of map pictures: what they say and how much room they need.

A legend is a list of groups, each a title (may be empty) and entries (label, ``#rrggbb``); long legends are
flowed into columns. A colour bar carries its own ticks: zero and the cap always, the two sides of a
diverging scale ticked separately so neither is crowded.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .numbers import short

#: Width of a character and height of a line, in units of the font size (px), for layout estimates.
CHAR, LINE = 0.58, 1.55


@dataclass(frozen=True)
class Legend:
    """Legend groups: (title, ((label, colour), …)); a title of "" shows no heading."""

    groups: tuple[tuple[str, tuple[tuple[str, str], ...]], ...]

    def lines(self) -> list[tuple[str, str | None, bool]]:
        """(text, colour or None, is a heading) in reading order; an untitled group after others starts with an
        empty heading (a blank line), so it is never shown as the continuation of the group before it."""
        out = []
        for title, entries in self.groups:
            if title or out:
                out.append((title, None, True))
            out += [(label, colour, False) for label, colour in entries]
        return out

    @property
    def entries(self) -> list[tuple[str, str]]:
        """Every (label, colour), flattened; the label carries its group (``"ply 5: −45° glass, webs"``)."""
        return [(f"{label}, {title}" if title else label, colour) for title, entries in self.groups
                for label, colour in entries]


@dataclass(frozen=True)
class ColourBar:
    """A continuous colour scale: ``kind`` (``diverging`` or ``sequential``), limits, title, optional cap."""

    kind: str
    limits: tuple[float, float]
    title: str
    cap: float | None = None

    def position(self, value: float) -> float:
        """Where ``value`` sits along the bar (0 … 1): two slopes about zero for a diverging bar."""
        lo, hi = self.limits
        if self.kind == "diverging" and lo < 0 < hi:
            return 0.5 + 0.5 * value / hi if value >= 0 else 0.5 - 0.5 * value / lo
        return (value - lo) / (hi - lo) if hi > lo else 0.5

    def ticks(self, gap: float = 0.08) -> list[float]:
        """Tick values: round numbers on each side of zero, and always zero, the ends and the cap."""
        lo, hi = self.limits
        ticks: set[float] = set()
        if self.kind == "diverging":
            for a, b in ((lo, 0.0), (0.0, hi)):
                if b > a:
                    ticks.update(nice_ticks(a, b, 3))
        else:
            ticks.update(nice_ticks(lo, hi, 5))
        keep = {lo, hi} | ({0.0} if self.kind == "diverging" else set())
        if self.cap is not None:
            keep.add(self.cap)
        span = abs(hi - lo)
        ticks = {v for v in ticks | keep if lo - 1e-12 * span <= v <= hi + 1e-12 * span}
        return _thin(sorted(ticks), keep, self.position, gap)

    def tick_label(self, value: float) -> str:
        if self.cap is not None and np.isclose(value, self.cap):
            return f"≥ {short(value)}"
        return short(value)


def nice_ticks(lo: float, hi: float, n: int) -> list[float]:
    """About ``n`` round values (1, 2, 2.5, 5 × 10^k steps) within [lo, hi]."""
    if not hi > lo:
        return [lo]
    raw = (hi - lo) / max(n, 1)
    mag = 10.0 ** np.floor(np.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    first = np.ceil(lo / step - 1e-9) * step
    return [round(float(v), 12) for v in np.arange(first, hi + 1e-9 * step, step)]


def _thin(ticks: list[float], keep: set[float], position, gap: float) -> list[float]:
    """Drop ticks closer than ``gap`` (along the bar) to a tick that must stay or to one already taken."""
    out = sorted(keep & set(ticks), key=position)
    for t in ticks:
        if t not in keep and all(abs(position(t) - position(o)) >= gap for o in out):
            out.append(t)
    return sorted(out)


def flow(lines: int, rows_available: int) -> tuple[int, int]:
    """(columns, rows per column) to show ``lines`` legend lines in at most ``rows_available`` rows."""
    rows_available = max(rows_available, 1)
    cols = max(1, -(-lines // rows_available))
    return cols, -(-lines // cols) if lines else 0


def text_width(text: str, font: float) -> float:
    """Estimated width in pixels of ``text`` at ``font`` px."""
    return len(text) * CHAR * font
