"""What a stacking sequence expands to (:class:`LayerSpec`) and the parser's limits."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class LayerSpec:
    """One ply of an expanded stacking sequence.

    Parameters
    ----------
    angle : float
        Ply angle θ in degrees, counter-clockwise about the normal from the
        laminate x axis to the ply's 1 (fibre) axis.
    material : str or None
        Per-ply material name overriding the laminate's default; None keeps the
        default.
    thickness : float or None
        Per-ply thickness overriding the material's or laminate's default, in the
        definition's length unit; None keeps the default.
    """

    angle: float
    material: str | None = None
    thickness: float | None = None


MAX_PLIES = 2000
"""Default cap on the expanded ply count."""

MAX_TEXT = 10_000
"""Longest stacking-sequence text accepted, in characters."""

MAX_DEPTH = 8
"""Deepest nesting of parenthesised groups."""

MAX_ANGLE = 360.0
"""Largest ply angle magnitude accepted, in degrees (catches run-together counts such as ``902``)."""
