"""Laminate 0° direction rules as declared in a definition (evaluated per cell by :mod:`bridge.model.orientation`)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from shells.errors import DefinitionError


def _vec3(value, what: str) -> tuple[float, float, float]:
    v = np.asarray(value, dtype=np.float64)
    if v.shape != (3,) or not np.isfinite(v).all():
        raise DefinitionError(f"{what} must be 3 finite numbers, got {value!r}")
    return tuple(float(c) for c in v)


@dataclass(frozen=True)
class Vector:
    """Laminate 0° = ``direction`` (global, any length) projected on each cell."""

    direction: tuple

    def __post_init__(self):
        d = _vec3(self.direction, "Vector direction")
        if not any(d):
            raise DefinitionError("Vector direction is zero; give the laminate 0° direction")
        object.__setattr__(self, "direction", d)


@dataclass(frozen=True)
class Axis:
    """Laminate 0° along an axis line (``"axial"``) or around it (``"hoop"``).

    Parameters
    ----------
    direction : 3 floats
        Axis direction (global).
    origin : 3 floats
        A point on the axis (model length unit).
    mode : {"axial", "hoop"}
        Hoop is right-handed about ``direction``.
    """

    direction: tuple
    origin: tuple = (0.0, 0.0, 0.0)
    mode: str = "axial"

    def __post_init__(self):
        d = _vec3(self.direction, "Axis direction")
        if not any(d):
            raise DefinitionError("Axis direction is zero; give the axis of the part")
        if self.mode not in ("axial", "hoop"):
            raise DefinitionError(f"Axis mode {self.mode!r} unknown; use 'axial' or 'hoop'")
        object.__setattr__(self, "direction", d)
        object.__setattr__(self, "origin", _vec3(self.origin, "Axis origin"))


@dataclass(frozen=True)
class Field:
    """φ read from the mesh cell array ``name`` (degrees from the element x axis)."""

    name: str
