"""The ``[fields]`` and ``[resultants]`` tables: names and conventions of the solver's resultant arrays.

The keys are documented for users in docs/definition.md (tables) and docs/solvers.md (a worked recipe).

```toml
[fields]                 # the solver's arrays (defaults N, M, Q)
N = "N"                  # a 3-component array (x, y, xy) ...
M = { array = "SHELL_MOMENT", components = ["xx", "yy", "xy"] }   # ... or components picked from any array
Q = ""                   # no transverse shear (Q = 0)
# scalars = ["nx", "ny", "nxy", "mx", "my", "mxy", "qx", "qy"]   # eight one-component arrays instead

[resultants]
frame = "element"        # "element", "laminate", "global" (tensor arrays) or "vectors" (then vectors = "array")
twist_sign = 1           # -1 for a solver whose twisting moment has the other sign
force_scale = 1.0        # one solver force unit in definition units: a number or "1 lbf"
length_scale = 1.0       # one solver length unit in definition units: a number or "1 in"
```
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from shells.errors import DefinitionError, InputError, ResultantsError

from bridge.definition.schema import check_keys, expect_table
from bridge.definition.units import UnitSystem, convert

COMPONENTS = ("Nx", "Ny", "Nxy", "Mx", "My", "Mxy", "Qx", "Qy")
FRAMES = ("element", "laminate", "global", "vectors")
#: Component names of a 3 × 3 tensor array (9 components, row-major).
TENSOR9 = ("xx", "xy", "xz", "yx", "yy", "yz", "zx", "zy", "zz")
#: Orders of symmetric 6-component tensor arrays, by the name ``tensor_order`` gives them.
TENSOR6 = {"voigt": ("xx", "yy", "zz", "yz", "xz", "xy"), "vtk": ("xx", "yy", "zz", "xy", "yz", "xz")}
#: How many components each resultant takes from its array.
WIDTH = {"N": 3, "M": 3, "Q": 2}


def component_index(name: int | str, width: int, tensor_order: str | None, where: str) -> int:
    """Column of a named component in an array of ``width`` components.

    Integers are 0-based columns. Tensor names (``xx``, ``xy``, … ``zz``; ``yx`` = ``xy``) need a 9-component
    array (row-major 3 × 3) or a 6-component one with a declared ``tensor_order``.
    """
    if isinstance(name, int):
        if not 0 <= name < width:
            raise ResultantsError(f"{where}: component {name} is outside 0 … {width - 1} of the array")
        return name
    if width == 9:
        return TENSOR9.index(name)
    if width == 6:
        if tensor_order is None:
            raise ResultantsError(f"{where}: the array has 6 components; say their order with [result_files] "
                                  "tensor_order = \"voigt\" (xx yy zz yz xz xy) or \"vtk\" (xx yy zz xy yz xz)")
        key = name if name in TENSOR6[tensor_order] else name[::-1]
        return TENSOR6[tensor_order].index(key)
    raise ResultantsError(f"{where}: the array has {width} components, not a tensor; pick components by number "
                          f"(0 … {width - 1})")


@dataclass(frozen=True)
class ResultantFields:
    """Names of the solver's arrays and the components taken from them.

    Parameters
    ----------
    n, m : str
        Arrays of N (force/length) and M (moment/length): 3 components (x, y, xy) unless picked.
    q : str or None
        Array of Q (force/length), 2 components (xz, yz) unless picked; None when the solver gives no
        transverse shear (Q is then zero).
    scalars : tuple of 8 str, optional
        Eight one-component arrays in :data:`COMPONENTS` order; replaces n, m, q.
    picks : tuple of (str, tuple) pairs
        For "N", "M", "Q": the components taken from the array, as 0-based columns or tensor names
        (:func:`component_index`), in the order x, y, xy (N, M) or xz, yz (Q).
    """

    n: str = "N"
    m: str = "M"
    q: str | None = "Q"
    scalars: tuple | None = None
    picks: tuple = ()

    def __post_init__(self):
        if self.scalars is not None:
            if len(self.scalars) != 8:
                raise ResultantsError(f"ResultantFields.scalars needs 8 names ({', '.join(COMPONENTS)}), "
                                      f"got {len(self.scalars)}")
            object.__setattr__(self, "scalars", tuple(str(s) for s in self.scalars))

    def layout(self) -> list[tuple[str, slice, tuple | None]]:
        """(array name, slice of the 8 components it fills, components picked or None), in component order."""
        if self.scalars is not None:
            return [(s, slice(i, i + 1), None) for i, s in enumerate(self.scalars)]
        picks = dict(self.picks)
        out = [(self.n, slice(0, 3), picks.get("N")), (self.m, slice(3, 6), picks.get("M"))]
        return out + ([(self.q, slice(6, 8), picks.get("Q"))] if self.q is not None else [])


@dataclass(frozen=True)
class ResultantSettings:
    """How the solver's resultants map onto ours.

    Parameters
    ----------
    frame : {"element", "laminate", "global", "vectors"}
        Axes the resultants are given in: the element frame; the laminate axes (rotated by the material
        angle φ); global axes (then N, M and Q are read from whole 3 × 3 tensor arrays and projected on each
        cell's plane: N_e = Eᵀ N_g E with E = [x y n], Q from its (xz, yz) entries); or per-cell x vectors.
    vectors : str, optional
        Cell array (n_cells, 3) with the x vector of each cell, for ``frame="vectors"``.
    twist_sign : {+1, -1}
        Factor on Mxy (−1 for a solver defining the twisting moment with the other sign); applied in the
        solver's in-plane axes (after the projection of global tensors).
    force_scale, length_scale : float
        One solver force / length unit in definition units: N and Q are multiplied by
        force_scale / length_scale, M by force_scale.
    """

    frame: str = "element"
    vectors: str | None = None
    twist_sign: int = 1
    force_scale: float = 1.0
    length_scale: float = 1.0

    def __post_init__(self):
        if self.frame not in FRAMES:
            raise ResultantsError(f"resultant frame {self.frame!r} unknown; use {', '.join(FRAMES)}")
        if self.twist_sign not in (1, -1):
            raise ResultantsError(f"twist_sign must be +1 or -1, got {self.twist_sign!r}")
        for key in ("force_scale", "length_scale"):
            v = getattr(self, key)
            if not (np.isfinite(v) and v > 0):
                raise ResultantsError(f"{key} must be a positive number, got {v!r}")
        if self.frame == "vectors" and not self.vectors:
            raise ResultantsError("frame 'vectors' needs vectors = \"name of the per-cell x-vector array\"")


def _pick(value: Any, key: str) -> tuple[str, tuple | None]:
    """``"name"`` or ``{ array = "name", components = [...] }`` → (array, components or None)."""
    if isinstance(value, str):
        return value, None
    table = expect_table(value, f"fields.{key}")
    check_keys(table, ("array", "components"), f"fields.{key}", required=("array",))
    comps = table.get("components")
    if not isinstance(table["array"], str) or not table["array"]:
        raise DefinitionError(f"fields.{key}.array must name an array")
    if comps is None:
        return table["array"], None
    want = WIDTH[key]
    ok = isinstance(comps, list) and len(comps) == want and all(
        (isinstance(c, int) and not isinstance(c, bool) and c >= 0) or (isinstance(c, str) and c in TENSOR9)
        for c in comps)
    if not ok:
        order = "x, y, xy" if key != "Q" else "xz, yz"
        raise DefinitionError(f"fields.{key}.components must list {want} components ({order}) as column numbers "
                              f"from 0 or tensor names ({', '.join(TENSOR9)})")
    return table["array"], tuple(comps)


def parse_fields(table: Any) -> ResultantFields:
    """Check a ``[fields]`` table and fill its defaults (errors name the entry; the caller adds the file)."""
    table = expect_table(table, "[fields]")
    check_keys(table, ("N", "M", "Q", "scalars"), "fields")
    if "scalars" in table:
        value = table["scalars"]
        if not (isinstance(value, list) and len(value) == 8 and all(isinstance(v, str) for v in value)):
            raise DefinitionError("fields.scalars must be a list of eight array names")
    names, picks = {}, []
    for key, default in (("N", "N"), ("M", "M"), ("Q", "Q")):
        value = table.get(key, default)
        if not isinstance(value, (str, dict)):
            raise DefinitionError(f"fields.{key} must be an array name or {{ array = \"...\", components = [...] }}")
        names[key], comps = _pick(value, key)
        if comps is not None:
            picks.append((key, comps))
    return ResultantFields(names["N"], names["M"], names["Q"] or None,
                           tuple(table["scalars"]) if "scalars" in table else None, tuple(picks))


def parse_resultant_settings(table: Any, units: UnitSystem) -> ResultantSettings:
    """Check a ``[resultants]`` table and fill its defaults (errors name the entry; the caller adds the file).

    ``force_scale`` and ``length_scale`` take a number or a unit string (``"1 lbf"``, ``"1 in"``), converted to
    the definition's units.
    """
    table = expect_table(table, "[resultants]")
    check_keys(table, ("frame", "vectors", "twist_sign", "force_scale", "length_scale"), "resultants")
    scales = {}
    for key, kind in (("force_scale", "force"), ("length_scale", "length")):
        value = table.get(key, 1.0)
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise DefinitionError(f"resultants.{key} must be a number or a unit string such as \"1 lbf\"")
        scales[key] = convert(value, kind, units, f"resultants.{key}") if isinstance(value, str) else float(value)
    frame = table.get("frame", "element")
    if frame not in FRAMES:
        raise DefinitionError(f"resultants.frame = {frame!r}; use one of {', '.join(FRAMES)}")
    try:
        return ResultantSettings(frame, table.get("vectors"), table.get("twist_sign", 1), scales["force_scale"],
                                 scales["length_scale"])
    except InputError as err:
        raise DefinitionError(f"[resultants]: {err.detail}") from None
