"""The ``[solver_plies]`` table: how the solver's per-ply stresses or strains are named and what they hold.

```toml
[solver_plies]
pattern = "ply{ply}_{point}_stress"   # cell-array name: {ply} the ply number, {point} the point name,
                                      # optional {component} (one scalar array per component)
ply_base = 1                          # number of the first ply in the names (0 or 1)
ply_order = "bottom-up"               # or "top-down" (the solver's ply 1 is the top ply)
points = { bottom = "bottom", middle = "middle", top = "top" }   # our point -> its name in the pattern;
                                      # list only the points the solver writes (one point: no {point})
axes = "material"                     # or "element" (x, y of the element frame)
quantity = "stress"                   # or "strain"
components = ["s1", "s2", "s12"]      # component order of the arrays; "_" skips one
shear = "engineering"                 # strains: "engineering" (γ) or "tensor" (ε12 = γ/2)
scale = 1.0                           # solver unit -> definition unit (multiplies every value)
```

Component names: ``s`` (stress) or ``e`` (strain) followed by ``1 2 12 13 23`` (material axes) or
``x y xy xz yz`` (element axes). The case is found as for resultants (docs/meshes.md): one file per case,
arrays with an ``@case`` suffix, or an XDMF series. See docs/compare.md; the values are read by
:mod:`bridge.compare.solver_plies`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Mapping

import numpy as np

from postproc.compare import POINTS
from shells.errors import DefinitionError

from bridge.definition.schema import check_keys, expect_table

KEYS = ("pattern", "ply_base", "ply_order", "points", "axes", "quantity", "components", "shear", "scale")
SUFFIXES = {"material": ("1", "2", "12", "13", "23"), "element": ("x", "y", "xy", "xz", "yz")}
SKIP = "_"
_PLACEHOLDER = re.compile(r"\{(\w*)\}")


@dataclass(frozen=True)
class SolverPlies:
    """A checked ``[solver_plies]`` table (module notes).

    Attributes
    ----------
    points : tuple of (int, str)
        (our point index 0 bottom / 1 middle / 2 top, its name in the pattern).
    slots : tuple of int
        For each array component, the index 0–4 of (·1, ·2, ·12, ·13, ·23) it fills, or −1 (skipped).
    """

    pattern: str = "ply{ply}_{point}_stress"
    ply_base: int = 1
    ply_order: str = "bottom-up"
    points: tuple = ((0, "bottom"), (1, "middle"), (2, "top"))
    axes: str = "material"
    quantity: str = "stress"
    components: tuple = ("s1", "s2", "s12")
    shear: str = "engineering"
    scale: float = 1.0

    @property
    def slots(self) -> tuple[int, ...]:
        suf = SUFFIXES[self.axes]
        return tuple(-1 if c == SKIP else suf.index(c[1:]) for c in self.components)

    def name(self, ply: int, point: str, component: str | None = None) -> str:
        """Cell-array name of ply ``ply`` (0-based, in the solver's order) at a point."""
        out = self.pattern.replace("{ply}", str(ply + self.ply_base)).replace("{point}", point)
        return out.replace("{component}", component) if component is not None else out


def _choice(table, key, options, default):
    v = table.get(key, default)
    if v not in options:
        raise DefinitionError(f"solver_plies.{key} = {v!r}; use one of {', '.join(map(repr, options))}")
    return v


def parse_solver_plies(table: Mapping) -> SolverPlies:
    """Check a ``[solver_plies]`` table and fill its defaults.

    Raises
    ------
    DefinitionError
        Unknown keys, a pattern without ``{ply}``, bad point names, component names not of the declared
        quantity and axes, an element-axes set without all three in-plane components, a non-positive scale.
    """
    table = expect_table(table, "[solver_plies]")
    check_keys(table, KEYS, "solver_plies")
    pattern = table.get("pattern", SolverPlies.pattern)
    if not isinstance(pattern, str) or "{ply}" not in pattern:
        raise DefinitionError("solver_plies.pattern must be a string containing {ply}, e.g. 'ply{ply}_{point}_stress'")
    bad = sorted(set(_PLACEHOLDER.findall(pattern)) - {"ply", "point", "component"})
    if bad:
        raise DefinitionError(f"solver_plies.pattern: unknown placeholder(s) {bad}; use {{ply}}, {{point}}, "
                              "{component}")
    base = table.get("ply_base", 1)
    if base not in (0, 1) or isinstance(base, bool):
        raise DefinitionError(f"solver_plies.ply_base = {base!r}; use 0 or 1")
    quantity = _choice(table, "quantity", ("stress", "strain"), "stress")
    axes = _choice(table, "axes", ("material", "element"), "material")
    pts = table.get("points", {p: p for p in POINTS})
    if (not isinstance(pts, Mapping) or not pts
            or any(k not in POINTS or not isinstance(v, str) for k, v in pts.items())):
        raise DefinitionError("solver_plies.points must map bottom / middle / top to the point names of the "
                              "pattern, e.g. { bottom = \"bot\", top = \"top\" }")
    if "{point}" not in pattern and len(pts) != 1:
        raise DefinitionError("solver_plies.pattern has no {point}: give exactly one point, e.g. "
                              "points = { middle = \"\" }")
    default = tuple(("s" if quantity == "stress" else "e") + s for s in SUFFIXES[axes][:3])
    comps = table.get("components", list(default))
    prefix = "s" if quantity == "stress" else "e"
    if not isinstance(comps, list) or not comps or not all(isinstance(c, str) for c in comps):
        raise DefinitionError(f"solver_plies.components must be a list of names such as {list(default)}")
    for c in comps:
        if c != SKIP and (c[:1] != prefix or c[1:] not in SUFFIXES[axes]):
            raise DefinitionError(f"solver_plies.components: {c!r} is not a {quantity} component in {axes} axes; "
                                  f"use {prefix} + one of {', '.join(SUFFIXES[axes])}, or '_' to skip")
    used = [c for c in comps if c != SKIP]
    if len(set(used)) != len(used):
        raise DefinitionError(f"solver_plies.components names a component twice: {comps}")
    if axes == "element":
        suf = {c[1:] for c in used}
        if not {"x", "y", "xy"} <= suf or len(suf & {"xz", "yz"}) == 1:
            raise DefinitionError("solver_plies.components: element axes need x, y and xy (and both or neither "
                                  "of xz, yz) to rotate into the ply axes")
    scale = table.get("scale", 1.0)
    if isinstance(scale, bool) or not isinstance(scale, (int, float)) or not (np.isfinite(scale) and scale > 0):
        raise DefinitionError(f"solver_plies.scale = {scale!r}; give a positive number")
    order = {p: k for k, p in enumerate(POINTS)}
    return SolverPlies(pattern, base, _choice(table, "ply_order", ("bottom-up", "top-down"), "bottom-up"),
                       tuple(sorted(((order[k], v) for k, v in pts.items()))), axes, quantity, tuple(comps),
                       _choice(table, "shear", ("engineering", "tensor"), "engineering"), float(scale))
