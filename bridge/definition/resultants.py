"""The ``[fields]`` and ``[resultants]`` tables: names and conventions of the solver's resultant arrays.

```toml
[fields]                 # names of the solver's cell arrays (defaults N, M, Q)
N = "N"
M = "M"
Q = "Q"                  # or Q = "" when the solver gives no transverse shear
# scalars = ["nx", "ny", "nxy", "mx", "my", "mxy", "qx", "qy"]   # eight one-component arrays instead

[resultants]
frame = "element"        # "element", "laminate" or "vectors" (then vectors = "array name")
twist_sign = 1           # -1 for a solver whose twisting moment has the other sign
force_scale = 1.0        # solver force unit → definition force unit
length_scale = 1.0       # solver length unit → definition length unit
```
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from shells.errors import DefinitionError, InputError, ResultantsError

from bridge.definition.schema import check_keys, expect_table

COMPONENTS = ("Nx", "Ny", "Nxy", "Mx", "My", "Mxy", "Qx", "Qy")


@dataclass(frozen=True)
class ResultantFields:
    """Names of the solver's cell arrays.

    Parameters
    ----------
    n, m : str
        Arrays of 3 components (x, y, xy): force/length and moment/length.
    q : str or None
        Array of 2 components (xz, yz), force/length; None when the solver
        gives no transverse shear (Q is then zero).
    scalars : tuple of 8 str, optional
        Eight one-component arrays in :data:`COMPONENTS` order; replaces n, m, q.
    """

    n: str = "N"
    m: str = "M"
    q: str | None = "Q"
    scalars: tuple | None = None

    def __post_init__(self):
        if self.scalars is not None:
            if len(self.scalars) != 8:
                raise ResultantsError(f"ResultantFields.scalars needs 8 names ({', '.join(COMPONENTS)}), "
                                      f"got {len(self.scalars)}")
            object.__setattr__(self, "scalars", tuple(str(s) for s in self.scalars))

    def layout(self) -> list[tuple[str, slice]]:
        """(array name, slice of the 8 components it fills), in component order."""
        if self.scalars is not None:
            return [(s, slice(i, i + 1)) for i, s in enumerate(self.scalars)]
        out = [(self.n, slice(0, 3)), (self.m, slice(3, 6))]
        return out + ([(self.q, slice(6, 8))] if self.q is not None else [])


@dataclass(frozen=True)
class ResultantSettings:
    """How the solver's resultants map onto ours.

    Parameters
    ----------
    frame : {"element", "laminate", "vectors"}
        Axes the resultants are given in: the element frame, the laminate
        axes (rotated by the material angle φ), or per-cell x vectors.
    vectors : str, optional
        Cell array (n_cells, 3) with the x vector of each cell, for ``frame="vectors"``.
    twist_sign : {+1, -1}
        Factor on Mxy, applied in the solver's axes (−1 for a solver defining
        the twisting moment with the other sign).
    force_scale, length_scale : float
        Solver units to definition units: N and Q are multiplied by
        force_scale / length_scale, M by force_scale.
    """

    frame: str = "element"
    vectors: str | None = None
    twist_sign: int = 1
    force_scale: float = 1.0
    length_scale: float = 1.0

    def __post_init__(self):
        if self.frame not in ("element", "laminate", "vectors"):
            raise ResultantsError(f"resultant frame {self.frame!r} unknown; use element, laminate or vectors")
        if self.twist_sign not in (1, -1):
            raise ResultantsError(f"twist_sign must be +1 or -1, got {self.twist_sign!r}")
        for key in ("force_scale", "length_scale"):
            v = getattr(self, key)
            if not (np.isfinite(v) and v > 0):
                raise ResultantsError(f"{key} must be a positive number, got {v!r}")



def parse_fields(table: Any) -> ResultantFields:
    """Check a ``[fields]`` table and fill its defaults (errors name the entry; the caller adds the file)."""
    table = expect_table(table, "[fields]")
    check_keys(table, ("N", "M", "Q", "scalars"), "fields")
    for key, value in table.items():
        ok = isinstance(value, str) if key != "scalars" else (
            isinstance(value, list) and len(value) == 8 and all(isinstance(v, str) for v in value))
        if not ok:
            raise DefinitionError(f"fields.{key} must be " + ("a list of eight array names" if key == "scalars"
                                                             else "an array name"))
    q = table.get("Q", "Q")
    return ResultantFields(table.get("N", "N"), table.get("M", "M"), q or None,
                           tuple(table["scalars"]) if "scalars" in table else None)


def parse_resultant_settings(table: Any) -> ResultantSettings:
    """Check a ``[resultants]`` table and fill its defaults (errors name the entry; the caller adds the file)."""
    table = expect_table(table, "[resultants]")
    check_keys(table, ("frame", "vectors", "twist_sign", "force_scale", "length_scale"), "resultants")
    for key in ("force_scale", "length_scale"):
        if isinstance(table.get(key, 1.0), bool) or not isinstance(table.get(key, 1.0), (int, float)):
            raise DefinitionError(f"resultants.{key} must be a number")
    try:
        return ResultantSettings(table.get("frame", "element"), table.get("vectors"), table.get("twist_sign", 1),
                                 float(table.get("force_scale", 1.0)), float(table.get("length_scale", 1.0)))
    except InputError as err:
        raise DefinitionError(err.detail) from None
