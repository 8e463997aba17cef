"""The ``[solver_plies]`` table: how the solver's per-ply stresses or strains are named and what they hold.

```toml
[solver_plies]
pattern = "ply{ply}_{point}_stress"   # cell-array name: {ply} the ply number, {point} the point name,
                                      # optional {component} (one scalar array per component)
points = { bottom = "bottom", middle = "middle", top = "top" }   # our point -> its name in the pattern
# or, instead of pattern and points, where each array sits through the thickness:
# locations = [ { array = "TOP", surface = "bottom" }, { array = "p{ply}", fraction = 0.25 },
#               { array = "S", ply = 2, point = "top" }, { array = "Z1", z = "-0.5 mm" } ]
ply_base = 1                          # number of the first ply in the names (0 or 1)
ply_order = "bottom-up"               # or "top-down" (the solver's ply 1 is the top ply)
axes = "material"                     # "element", "laminate", "vectors" (vectors = "array"), or "global"
quantity = "stress"                   # or "strain"
components = ["sigma1", "sigma2", "tau12"]   # component order of the arrays; "_" skips one
shear = "engineering"                 # strains: "engineering" (γ) or "tensor" (ε12 = γ/2)
scale = 1.0                           # one solver unit in definition units: a number or "1 psi"
```

Component names: material axes ``sigma1 sigma2 tau12 tau13 tau23`` (stress) and ``eps1 eps2 gamma12
gamma13 gamma23`` (strain); in-plane axes (element, laminate, vectors) ``sigma_x sigma_y tau_xy tau_xz
tau_yz`` and ``eps_x eps_y gamma_xy gamma_xz gamma_yz``. Global axes take whole 3 × 3 tensor arrays (9
components, or 6 with ``[result_files] tensor_order``) and no component list. The values are read by
:mod:`bridge.compare.solver_plies`; users' documentation: docs/compare.md.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from postproc.compare import POINTS
from shells.components import ELEMENT_STRAIN, ELEMENT_STRESS, MATERIAL_STRAIN, MATERIAL_STRESS
from shells.errors import DefinitionError

from bridge.definition.schema import check_keys, expect_table
from bridge.definition.units import UnitSystem, convert

KEYS = ("pattern", "locations", "ply_base", "ply_order", "points", "axes", "vectors", "quantity", "components",
        "shear", "scale")
AXES = ("material", "element", "laminate", "vectors", "global")
#: Component names by quantity and kind of axes, in slot order (1, 2, 12, 13, 23) / (x, y, xy, xz, yz).
NAMES = {("stress", "material"): MATERIAL_STRESS, ("strain", "material"): MATERIAL_STRAIN,
         ("stress", "plane"): ELEMENT_STRESS, ("strain", "plane"): ELEMENT_STRAIN}
_OLD = re.compile(r"^[se](1|2|12|13|23|x|y|xy|xz|yz)$")
SKIP = "_"
_PLACEHOLDER = re.compile(r"\{(\w*)\}")
LOCATION_KINDS = ("point", "fraction", "z", "surface")


@dataclass(frozen=True)
class Location:
    """Where one solver array sits through the thickness.

    Attributes
    ----------
    array : str
        Array name, with ``{ply}`` (and ``{component}``) placeholders when it is one per ply (per component).
    ply : int or None
        0-based ply in the solver's numbering; None: every ply (``{ply}`` in the name) or found from ``z``.
    kind : {"point", "fraction", "z", "surface"}
    value : float
        point: 0 bottom, 0.5 middle, 1 top of the ply; fraction: 0 … 1 from the ply's bottom; z: position
        from the reference surface (definition length unit); surface: 0 bottom, 1 top of the laminate.
    """

    array: str
    ply: int | None
    kind: str
    value: float


@dataclass(frozen=True)
class SolverPlies:
    """A checked ``[solver_plies]`` table (module notes)."""

    locations: tuple = (Location("ply{ply}_bottom_stress", None, "point", 0.0),
                        Location("ply{ply}_middle_stress", None, "point", 0.5),
                        Location("ply{ply}_top_stress", None, "point", 1.0))
    ply_base: int = 1
    ply_order: str = "bottom-up"
    axes: str = "material"
    vectors: str | None = None
    quantity: str = "stress"
    components: tuple = ("sigma1", "sigma2", "tau12")
    shear: str = "engineering"
    scale: float = 1.0

    @property
    def slots(self) -> tuple[int, ...]:
        """For each array component, the index 0–4 of (·1, ·2, ·12, ·13, ·23) it fills, or −1 (skipped)."""
        if self.axes == "global":
            return ()
        names = NAMES[(self.quantity, "material" if self.axes == "material" else "plane")]
        return tuple(-1 if c == SKIP else names.index(c) for c in self.components)

    def name(self, template: str, ply: int, component: str | None = None) -> str:
        """Array name of ply ``ply`` (0-based, in the solver's order)."""
        out = template.replace("{ply}", str(ply + self.ply_base))
        return out.replace("{component}", component) if component is not None else out


def _choice(table, key, options, default):
    v = table.get(key, default)
    if v not in options:
        raise DefinitionError(f"solver_plies.{key} = {v!r}; use one of {', '.join(map(repr, options))}")
    return v


def _check_template(name: Any, where: str) -> str:
    if not isinstance(name, str) or not name:
        raise DefinitionError(f"{where} must be an array name such as 'ply{{ply}}_top'")
    bad = sorted(set(_PLACEHOLDER.findall(name)) - {"ply", "point", "component"})
    if bad:
        raise DefinitionError(f"{where}: unknown placeholder(s) {bad}; use {{ply}}, {{point}}, {{component}}")
    return name


def _pattern_locations(table: Mapping) -> tuple[Location, ...]:
    pattern = _check_template(table.get("pattern", "ply{ply}_{point}_stress"), "solver_plies.pattern")
    if "{ply}" not in pattern:
        raise DefinitionError("solver_plies.pattern must contain {ply}, e.g. 'ply{ply}_{point}_stress'; for arrays "
                              "that are not one per ply give locations = [...]")
    pts = table.get("points", {p: p for p in POINTS})
    if (not isinstance(pts, Mapping) or not pts
            or any(k not in POINTS or not isinstance(v, str) for k, v in pts.items())):
        raise DefinitionError("solver_plies.points must map bottom / middle / top to the point names of the "
                              "pattern, e.g. { bottom = \"bot\", top = \"top\" }")
    if "{point}" not in pattern and len(pts) != 1:
        raise DefinitionError("solver_plies.pattern has no {point}: give exactly one point, e.g. "
                              "points = { middle = \"\" }")
    return tuple(Location(pattern.replace("{point}", v), None, "point", POINTS.index(k) / 2.0)
                 for k, v in sorted(pts.items(), key=lambda kv: POINTS.index(kv[0])))


def _location(entry: Any, k: int, base: int, units: UnitSystem) -> Location:
    where = f"solver_plies.locations[{k + 1}]"
    entry = expect_table(entry, where)
    check_keys(entry, ("array", "ply") + LOCATION_KINDS, where, required=("array",))
    array = _check_template(entry["array"], f"{where}.array")
    if "{point}" in array:
        raise DefinitionError(f"{where}.array: {{point}} belongs to pattern; give point = ... here")
    kinds = [c for c in LOCATION_KINDS if c in entry]
    if len(kinds) != 1:
        raise DefinitionError(f"{where}: give one of point, fraction, z, surface (where the array sits)")
    kind = kinds[0]
    ply = entry.get("ply")
    if ply is not None and (isinstance(ply, bool) or not isinstance(ply, int) or ply < base):
        raise DefinitionError(f"{where}.ply = {ply!r}; give the solver's ply number (from {base})")
    if ply is not None and "{ply}" in array:
        raise DefinitionError(f"{where}: the array has {{ply}} (one per ply); leave ply out")
    value = entry[kind]
    if kind == "point":
        if value not in POINTS:
            raise DefinitionError(f"{where}.point = {value!r}; use bottom, middle or top")
        value = POINTS.index(value) / 2.0
    elif kind == "surface":
        if value not in ("bottom", "top"):
            raise DefinitionError(f"{where}.surface = {value!r}; use bottom or top (of the laminate)")
        if ply is not None or "{ply}" in array:
            raise DefinitionError(f"{where}: a laminate surface takes no ply")
        value = 0.0 if value == "bottom" else 1.0
    elif kind == "fraction":
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 <= value <= 1:
            raise DefinitionError(f"{where}.fraction = {value!r}; give a number from 0 (ply bottom) to 1 (top)")
    else:
        value = convert(value, "length", units, f"{where}.z")
    if kind in ("point", "fraction") and ply is None and "{ply}" not in array:
        raise DefinitionError(f"{where}: say which ply: ply = N, or {{ply}} in the array name")
    return Location(array, None if ply is None else ply - base, kind, float(value))


def _components(table: Mapping, quantity: str, axes: str) -> tuple:
    if axes == "global":
        if "components" in table:
            raise DefinitionError("solver_plies.components: global axes take whole 3 × 3 tensor arrays; leave "
                                  "components out")
        return ()
    names = NAMES[(quantity, "material" if axes == "material" else "plane")]
    comps = table.get("components", list(names[:3]))
    if not isinstance(comps, list) or not comps or not all(isinstance(c, str) for c in comps):
        raise DefinitionError(f"solver_plies.components must be a list of names such as {list(names[:3])}")
    for c in comps:
        if _OLD.match(c):
            raise DefinitionError(f"solver_plies.components: {c!r} is an old name; use sigma1 sigma2 tau12 tau13 "
                                  "tau23 / eps1 eps2 gamma12 gamma13 gamma23 (material axes) or sigma_x sigma_y "
                                  "tau_xy tau_xz tau_yz / eps_x eps_y gamma_xy gamma_xz gamma_yz (in-plane axes)")
        if c != SKIP and c not in names:
            raise DefinitionError(f"solver_plies.components: {c!r} is not a {quantity} component in {axes} axes; "
                                  f"use {', '.join(names)}, or '_' to skip")
    used = [c for c in comps if c != SKIP]
    if len(set(used)) != len(used):
        raise DefinitionError(f"solver_plies.components names a component twice: {comps}")
    if axes != "material":
        idx = {names.index(c) for c in used}
        if not {0, 1, 2} <= idx or len(idx & {3, 4}) == 1:
            raise DefinitionError(f"solver_plies.components: {axes} axes need {', '.join(names[:3])} (and both or "
                                  f"neither of {names[3]}, {names[4]}) to rotate into the ply axes")
    return tuple(comps)


def parse_solver_plies(table: Any, units: UnitSystem | None = None) -> SolverPlies:
    """Check a ``[solver_plies]`` table and fill its defaults.

    Raises
    ------
    DefinitionError
        Unknown keys, a pattern without ``{ply}``, bad point names or locations, component names not of the
        declared quantity and axes (old short names are refused with the new ones named), in-plane axes
        without the three in-plane components, a non-positive scale.
    """
    from bridge.definition.units import system

    units = units or system("N-mm", "<solver_plies>")
    table = expect_table(table, "[solver_plies]")
    check_keys(table, KEYS, "solver_plies")
    base = table.get("ply_base", 1)
    if base not in (0, 1) or isinstance(base, bool):
        raise DefinitionError(f"solver_plies.ply_base = {base!r}; use 0 or 1")
    if "locations" in table:
        if "pattern" in table or "points" in table:
            raise DefinitionError("[solver_plies]: give pattern and points, or locations, not both")
        entries = table["locations"]
        if not isinstance(entries, list) or not entries:
            raise DefinitionError("solver_plies.locations must be a list of { array = ..., point/fraction/z/"
                                  "surface = ... } tables")
        locations = tuple(_location(e, k, base, units) for k, e in enumerate(entries))
    else:
        locations = _pattern_locations(table)
    quantity = _choice(table, "quantity", ("stress", "strain"), "stress")
    axes = _choice(table, "axes", AXES, "material")
    vectors = table.get("vectors")
    if (axes == "vectors") != (vectors is not None) or (vectors is not None and not isinstance(vectors, str)):
        raise DefinitionError("solver_plies: axes = \"vectors\" goes with vectors = \"name of the per-cell x-vector "
                              "array\" (and only then)")
    comps = _components(table, quantity, axes)
    if any("{component}" in loc.array for loc in locations) and axes == "global":
        raise DefinitionError("solver_plies: global axes take whole tensor arrays; drop {component}")
    scale = table.get("scale", 1.0)
    if isinstance(scale, str) and quantity == "stress":
        scale = convert(scale, "stress", units, "solver_plies.scale")
    if isinstance(scale, bool) or not isinstance(scale, (int, float)) or not (np.isfinite(scale) and scale > 0):
        raise DefinitionError(f"solver_plies.scale = {scale!r}; give a positive number"
                              + (" or a stress unit such as \"1 psi\"" if quantity == "stress" else ""))
    return SolverPlies(locations, base, _choice(table, "ply_order", ("bottom-up", "top-down"), "bottom-up"), axes,
                       vectors, quantity, comps, _choice(table, "shear", ("engineering", "tensor"), "engineering"),
                       float(scale))
