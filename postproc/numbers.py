"""How numbers are written in pictures and reports: four significant figures, a true minus sign."""

from __future__ import annotations

import math

#: Significant figures of every number shown to a reader.
FIGURES = 4


def sig(value, figures: int = FIGURES) -> str:
    """``value`` with ``figures`` significant figures (``−0.1070``, ``1.550e-09``, ``12``); text passes through.

    Trailing zeros are kept for numbers written in fixed notation so every value shows the same precision;
    integers are written as integers; NaN and infinities as ``—`` and ``∞``.
    """
    if isinstance(value, bool) or value is None:
        return "—" if value is None else str(value)
    if isinstance(value, int):
        return str(value).replace("-", "−")
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if math.isnan(v):
        return "—"
    if math.isinf(v):
        return "∞" if v > 0 else "−∞"
    if v == 0:
        return "0"
    exponent = math.floor(math.log10(abs(v)))
    if -4 <= exponent < figures + 2:
        decimals = figures - 1 - exponent
        text = f"{v:.{decimals}f}" if decimals >= 0 else f"{round(v, decimals):.0f}"
    else:
        text = f"{v:.{figures - 1}e}"
    return text.replace("-", "−")


def degrees(angle: float) -> str:
    """A ply angle as written to a reader: ``−45°``, ``22.5°``."""
    a = float(angle)
    return (sig(int(a)) if a == int(a) else sig(a, 3)) + "°"


def short(value: float) -> str:
    """A tick label: at most four significant figures, no trailing zeros, fixed notation from 0.001 to 10⁷."""
    v = float(value)
    if v == 0:
        return "0"
    if 1e-3 <= abs(v) < 1e7:
        text = f"{float(f'{v:.4g}'):.6f}".rstrip("0").rstrip(".")
    else:
        text = f"{v:.3g}"
    return text.replace("-", "−")
