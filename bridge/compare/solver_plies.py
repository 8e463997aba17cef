"""The ``[solver_plies]`` table and the solver's per-ply stresses or strains it maps.

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
arrays with an ``@case`` suffix, or an XDMF series. See docs/compare.md.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from postproc.compare import POINTS, element_to_material, material_to_element
from shells.errors import DefinitionError, InputError, ResultantsError

from bridge.definition.loader import Definition
from bridge.model.build import Model
from bridge.recover.resultants import _sources
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


def solver_plies_of(defn: Definition) -> SolverPlies:
    """The ``[solver_plies]`` table of a definition (defaults when absent), errors naming the file."""
    try:
        return parse_solver_plies(defn.raw.get("solver_plies", {}))
    except InputError as err:
        raise err.within(defn.source) from None


def _reorder(values: np.ndarray, nply: np.ndarray) -> np.ndarray:
    """Reverse the ply axis (axis 2) of every cell within its own ply count (a new array)."""
    out = np.full_like(values, np.nan)
    for n in np.unique(nply):
        cells = nply == n
        out[:, cells, :n] = values[:, cells, :n][:, :, ::-1]
    return out


def _case_order(file_names: Sequence[str], wanted: Sequence[str], src: str) -> list[int]:
    if len(file_names) == 1 and len(wanted) == 1:
        return [0]
    missing = [c for c in wanted if c not in file_names]
    if missing:
        raise ResultantsError(f"no solver ply values for case(s) {missing}; the file has {list(file_names)}. "
                              "Name the ply arrays' cases as the load cases", src)
    return [list(file_names).index(c) for c in wanted]


def _case_values(arrays: Mapping[str, np.ndarray], spec: SolverPlies, n_cells: int, nply: np.ndarray,
                 where: str) -> np.ndarray:
    mp = int(nply.max())
    out = np.full((n_cells, mp, 3, 5), np.nan)
    slots = spec.slots
    per_component = "{component}" in spec.pattern
    for k in range(mp):
        for q, pname in spec.points:
            if per_component:
                names = [(spec.name(k, pname, c), [s]) for c, s in zip(spec.components, slots) if s >= 0]
            else:
                names = [(spec.name(k, pname), slots)]
            for name, cols in names:
                if name not in arrays:
                    found = ", ".join(sorted(arrays)[:12]) or "no cell arrays"
                    raise ResultantsError(f"missing solver ply array {name!r}{where} (ply {k + 1}); found {found}. "
                                          "Fix [solver_plies] pattern, points or ply_base")
                a = np.asarray(arrays[name], dtype=float)
                a = a[:, None] if a.ndim == 1 else a
                if a.shape != (n_cells, len(cols)):
                    raise ResultantsError(f"solver ply array {name!r}{where} has shape {a.shape}; expected "
                                          f"({n_cells}, {len(cols)}) by [solver_plies] components")
                for j, s in enumerate(cols):
                    if s >= 0:
                        out[:, k, q, s] = a[:, j]
    return out


def read_solver_plies(path_or_paths, spec: SolverPlies, model: Model, case_names: Sequence[str]) -> np.ndarray:
    """The solver's ply values as (ncase, ncell, maxply, 3, 5), material axes and our conventions.

    Parameters
    ----------
    path_or_paths : path or list of paths
        As for resultants: one file per case, one file with ``@case`` arrays, or an XDMF series.
    spec : SolverPlies
    model : Model
        Cell count, ply counts, material angles and ply angles.
    case_names : sequence of str
        The run's cases, in order; the file's cases are matched by name (one case each: paired).

    Returns
    -------
    ndarray
        Points bottom, middle, top; components (·1, ·2, ·12, ·13, ·23), engineering shear for strains, in the
        definition's units; NaN where the solver gives nothing and past each cell's ply count.
    """
    n = model.n_cells
    nply = model.nply_of_cell()
    names, load, _, src = _sources(path_or_paths, n)
    try:
        cases = []
        for i in _case_order(names, case_names, src):
            arrays = load(i)
            if isinstance(arrays, np.ndarray):
                raise ResultantsError("an HDF5 /resultants file holds no ply values; give the solver's ply "
                                      "output (VTU, XDMF)")
            cases.append(_case_values(arrays, spec, n, nply, f" in case {names[i]!r}"))
    except InputError as err:
        raise err.within(src) from None
    values = np.stack(cases) * spec.scale
    if spec.ply_order == "top-down":
        values = _reorder(values, nply)
    values[:, np.arange(values.shape[2])[None, :] >= nply[:, None]] = np.nan
    if spec.quantity == "strain" and spec.shear == "tensor":
        values[..., 2:] *= 2.0
    if spec.axes == "element":
        values = element_to_material(values, ply_angles(model)[None, :, :, None], spec.quantity)
    return values


def ply_angles(model: Model) -> np.ndarray:
    """(ncell, maxply) angle from element x to each ply's 1 axis, θ + φ in degrees (NaN past the ply count)."""
    table = np.full((len(model.sections), max(s.n_plies for s in model.sections)), np.nan)
    for s, sec in enumerate(model.sections):
        table[s, :sec.n_plies] = [p.angle for p in sec.laminate.plies]
    return table[model.section] + model.phi[:, None]


def solver_arrays(values: np.ndarray, spec: SolverPlies, model: Model) -> dict[str, np.ndarray]:
    """The cell arrays a solver would write for one case under ``spec`` (the inverse of reading).

    ``values`` (ncell, maxply, 3, 5) in material axes and our conventions; plies past a cell's count are
    written as 0. For tests, examples and converters.
    """
    v = np.array(values, dtype=float)[None]
    if spec.axes == "element":
        v = material_to_element(v, np.nan_to_num(ply_angles(model))[None, :, :, None], spec.quantity)
    if spec.quantity == "strain" and spec.shear == "tensor":
        v[..., 2:] /= 2.0
    nply = model.nply_of_cell()
    if spec.ply_order == "top-down":
        v = _reorder(v, nply)
    v = np.nan_to_num(v[0] / spec.scale)
    out = {}
    for k in range(v.shape[1]):
        for q, pname in spec.points:
            cols = [(c, s) for c, s in zip(spec.components, spec.slots)]
            if "{component}" in spec.pattern:
                out.update({spec.name(k, pname, c): v[:, k, q, s] for c, s in cols if s >= 0})
            else:
                out[spec.name(k, pname)] = np.stack([v[:, k, q, s] if s >= 0 else np.zeros(len(v))
                                                     for _, s in cols], axis=1)
    return out

