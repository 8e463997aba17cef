"""The solver's per-ply stresses or strains, read as the definition's ``[solver_plies]`` table maps them.

The table is parsed with the definition (:mod:`bridge.definition.solver_plies`, docs/compare.md). Each
location of the table (an array per ply, or at a laminate surface, a fraction through a ply or an absolute z)
is resolved cell by cell to one of our plies and a position ζ through it (0 bottom … 1 top). Values at
ζ = 0, ½, 1 land on our bottom, middle and top points; values at other positions are fitted linearly within
their ply (two or more positions needed) and the fit evaluated at our three points, in-plane components only
(transverse shear is not linear through a ply, so it is left out there).

Values are kept twice: **as written** (the solver's in-plane axes, after global tensors are projected on each
cell's plane; what the diagnosis reverses or re-rotates) and in the plies' **material axes** (what is compared).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from postproc.compare import element_to_material, material_to_element
from shells.errors import InputError, ResultantsError

from bridge.definition.solver_plies import Location, SolverPlies
from bridge.model.build import Model
from bridge.recover.files import StepFiles, open_step_files
from bridge.recover.resultants import project, tensors

#: Two positions within this distance are the same point.
ZETA_TOL = 1e-9


def ply_angles(model: Model, cells=slice(None)) -> np.ndarray:
    """(ncell, maxply) angle from element x to each ply's 1 axis, θ + φ in degrees (NaN past the ply count)."""
    table = np.full((len(model.sections), max(s.n_plies for s in model.sections)), np.nan)
    for s, sec in enumerate(model.sections):
        table[s, :sec.n_plies] = [p.angle for p in sec.laminate.plies]
    return table[model.section[cells]] + model.phi[cells, None]


def axes_angle(spec: SolverPlies, model: Model, vectors: np.ndarray | None, cells=slice(None)) -> np.ndarray:
    """(ncell,) angle of the solver's in-plane axes from element x, degrees (0 for element and global axes)."""
    n = len(model.phi[cells])
    if spec.axes == "laminate":
        return model.phi[cells].copy()
    if spec.axes == "vectors":
        from bridge.model.frames import in_plane

        x, y, nrm = model.frame_x[cells], model.frame_y[cells], model.normal[cells]
        u, near = in_plane(np.asarray(vectors, dtype=float).reshape(n, 3), nrm)
        if near.any():
            raise ResultantsError(f"solver_plies.vectors: {int(near.sum())} cell(s) have an axis vector within 5° "
                                  "of the normal (or zero); fix the vector array")
        return np.degrees(np.arctan2(np.einsum("ij,ij->i", u, y), np.einsum("ij,ij->i", u, x)))
    return np.zeros(n)


def _resolve(loc: Location, k: int | None, nply: np.ndarray, ztab: np.ndarray, order: str, where: str):
    """Our ply index (−1: none) and ζ of every cell for one location (``k``: the solver ply of ``{ply}``)."""
    n = len(nply)
    if loc.kind == "surface":
        return (np.zeros(n, np.int64) if loc.value == 0 else nply - 1), np.full(n, loc.value)
    s = loc.ply if loc.ply is not None else k
    if loc.kind == "z":
        z = loc.value
        inside = (ztab[:, :-1] <= z) & (z <= ztab[:, 1:])
        count = inside.sum(axis=1)
        if s is None:
            if np.any(count > 1):
                raise ResultantsError(f"{where}: z = {z:g} is an interface between two plies in some cells; add "
                                      "ply = N to the location")
            p = np.where(count == 1, inside.argmax(axis=1), -1)
        else:
            p = np.where(s < nply, s if order == "bottom-up" else nply - 1 - s, -1)
        t0 = np.take_along_axis(ztab, np.clip(p, 0, None)[:, None], 1)[:, 0]
        t1 = np.take_along_axis(ztab, np.clip(p, 0, None)[:, None] + 1, 1)[:, 0]
        with np.errstate(invalid="ignore", divide="ignore"):
            zeta = (z - t0) / (t1 - t0)
        ok = (p >= 0) & (zeta > -ZETA_TOL) & (zeta < 1 + ZETA_TOL)
        return np.where(ok, p, -1), np.clip(zeta, 0.0, 1.0)
    p = np.where(s < nply, s if order == "bottom-up" else nply - 1 - s, -1)
    return p, np.full(n, loc.value)


@dataclass(frozen=True)
class PlyValues:
    """Solver values of some cells: (ncase, ncell, maxply, 3, 5) as written and in material axes."""

    written: np.ndarray
    material: np.ndarray


class SolverPlySource:
    """The solver's ply values of the matched cases, read by cells.

    Parameters
    ----------
    path_or_paths : path or sequence of paths
        Any result input :func:`bridge.recover.files.open_step_files` takes (several files merged by case).
    model : Model
    case_names : sequence of str
        The run's cases; the source keeps those the files hold (:attr:`case_index`), in run order. A single
        case on each side is paired whatever its names.
    """

    def __init__(self, path_or_paths, model: Model, case_names: Sequence[str]):
        defn = model.defn
        self.spec: SolverPlies = defn.solver_plies
        self.model = model
        self.files: StepFiles = open_step_files(path_or_paths, model.n_cells, defn.result_files, model.mesh)
        self.tensor_order = defn.result_files.tensor_order
        names = self.files.names
        if self.files.h5_path is not None:
            raise ResultantsError("an HDF5 /resultants file holds no ply values; give the solver's ply output "
                                  "(VTU, XDMF)", self.files.label)
        if len(names) == 1 and len(case_names) == 1:
            pairs = [(0, 0)]
        else:
            pairs = [(j, names.index(c)) for j, c in enumerate(case_names) if c in names]
        self.case_index = tuple(j for j, _ in pairs)
        self._steps = tuple(i for _, i in pairs)
        self.file_cases = names
        #: The files' cases paired with no case of the run (not compared; said in the summary).
        self.unmatched = tuple(c for i, c in enumerate(names) if i not in self._steps)
        self.vectors = None
        if self.spec.axes == "vectors":
            if self.spec.vectors not in self.files.extra:
                raise ResultantsError(f"solver_plies.vectors: no cell array {self.spec.vectors!r}; found "
                                      f"{', '.join(sorted(self.files.extra)) or 'none'}", self.files.label)
            self.vectors = np.asarray(self.files.extra[self.spec.vectors], dtype=float)
        nply = model.nply_of_cell()
        self._nply = nply
        zmax = max(s.n_plies for s in model.sections) + 1
        self._ztab = np.full((len(model.sections), zmax), np.nan)
        for s, sec in enumerate(model.sections):
            self._ztab[s, :sec.n_plies + 1] = sec.props.z

    def read_cells(self, cells: slice | np.ndarray) -> PlyValues:
        """Values of the matched cases at ``cells`` (a slice or increasing ids)."""
        try:
            return self._read(cells)
        except InputError as err:
            raise err.within(self.files.label) from None

    def _read(self, cells) -> PlyValues:
        spec, model = self.spec, self.model
        nply = self._nply[cells]
        n, mp = len(nply), int(self._nply.max())
        ztab = self._ztab[model.section[cells]]
        alpha = axes_angle(spec, model, None if self.vectors is None else self.vectors[cells], cells)
        frames = (model.frame_x[cells], model.frame_y[cells], model.normal[cells])
        written = np.full((len(self._steps), n, mp, 3, 5), np.nan)
        for j, i in enumerate(self._steps):
            arrays = self.files.arrays(i)
            where = f" in case {self.file_cases[i]!r}"
            fit = _Fit(n, mp)
            for loc in spec.locations:
                for k in (range(mp) if "{ply}" in loc.array else (None,)):
                    p, zeta = _resolve(loc, k, nply, ztab, spec.ply_order, f"solver_plies location {loc.array!r}")
                    vals = self._values(arrays, loc.array, k, cells, n, frames, where)
                    fit.add(p, zeta, vals)
            written[j] = fit.grid()
        written *= spec.scale
        if spec.quantity == "strain" and (spec.shear == "tensor" or spec.axes == "global"):
            written[..., 2:] *= 2.0
        past = np.arange(mp)[None, :] >= nply[:, None]
        written[:, past] = np.nan
        angle = ply_angles(model, cells) - alpha[:, None]
        if spec.axes == "material":
            material = written
        else:
            material = element_to_material(written, angle[None, :, :, None], spec.quantity)
        return PlyValues(written, material)

    def _values(self, arrays, template: str, k, cells, n: int, frames, where: str) -> np.ndarray:
        """(n, 5) values of one location in the solver's in-plane axes (NaN where not given)."""
        spec = self.spec
        out = np.full((n, 5), np.nan)
        per_component = "{component}" in template
        if per_component:
            names = [(spec.name(template, k or 0, c), [s]) for c, s in zip(spec.components, spec.slots) if s >= 0]
        else:
            names = [(spec.name(template, k or 0), list(spec.slots))]
        for name, slots in names:
            if name not in arrays:
                found = ", ".join(sorted(arrays)[:12]) or "no arrays"
                raise ResultantsError(f"missing solver ply array {name!r}{where}; found {found}. Fix "
                                      "[solver_plies] pattern, points, locations or ply_base")
            part = np.asarray(arrays[name][cells])                 # only these rows (lazy HDF5 arrays stay put)
            a = (part[:, None] if part.ndim == 1 else part.reshape(len(part), -1)).astype(np.float64)
            if spec.axes == "global":
                T = project(tensors(a, self.tensor_order, f"solver ply array {name!r}{where}"), frames)
                out[:] = np.stack([T[:, 0, 0], T[:, 1, 1], T[:, 0, 1], T[:, 0, 2], T[:, 1, 2]], axis=1)
                continue
            if a.shape[1] != len(slots):
                raise ResultantsError(f"solver ply array {name!r}{where} has {a.shape[1]} component(s); expected "
                                      f"{len(slots)} by [solver_plies] components")
            for col, s in enumerate(slots):
                if s >= 0:
                    out[:, s] = a[:, col]
        return out


class _Fit:
    """Solver values placed on our (ply, point) grid: exact points directly, others by a linear fit per ply."""

    def __init__(self, n: int, mp: int):
        self.exact = np.full((n, mp, 3, 5), np.nan)
        self.sums = np.zeros((5, n, mp, 5))      # Σ1, Σζ, Σζ², Σv, Σζv (per component, finite values only)

    def add(self, p: np.ndarray, zeta: np.ndarray, vals: np.ndarray) -> None:
        rows = np.flatnonzero(p >= 0)
        if rows.size == 0:
            return
        pp, z, v = p[rows], zeta[rows], vals[rows]
        q = np.rint(z * 2).astype(np.int64)
        on_point = np.abs(z * 2 - q) < 2 * ZETA_TOL
        r, c = rows[on_point], pp[on_point]
        self.exact[r, c, q[on_point]] = np.where(np.isfinite(v[on_point]), v[on_point], self.exact[r, c, q[on_point]])
        off = ~on_point
        if off.any():
            r, c, z, v = rows[off], pp[off], z[off][:, None], v[off]
            ok = np.isfinite(v)
            vz = np.where(ok, v, 0.0)
            for m, term in enumerate((ok * 1.0, ok * z, ok * z * z, vz, vz * z)):
                np.add.at(self.sums[m], (r, c), term)

    def grid(self) -> np.ndarray:
        out = self.exact.copy()
        s1, sz, szz, sv, szv = self.sums
        det = s1 * szz - sz * sz
        ok = (s1 >= 2) & (det > 1e-12 * np.maximum(s1 * szz, 1e-300))
        ok[..., 3:] = False                          # transverse shear is not linear through a ply
        with np.errstate(invalid="ignore", divide="ignore"):
            b = (s1 * szv - sz * sv) / det
            a = (sv - b * sz) / s1
        for q, zq in enumerate((0.0, 0.5, 1.0)):
            fill = ok & ~np.isfinite(out[:, :, q])
            out[:, :, q] = np.where(fill, a + b * zq, out[:, :, q])
        return out


def read_solver_plies(path_or_paths, model: Model, case_names: Sequence[str]) -> np.ndarray:
    """The solver's ply values as (ncase, ncell, maxply, 3, 5), material axes and our conventions.

    Points bottom, middle, top; components (·1, ·2, ·12, ·13, ·23), engineering shear for strains, in the
    definition's units; NaN where the solver gives nothing and past each cell's ply count. Every case of
    ``case_names`` must be in the files (see :class:`SolverPlySource` for partial matches).
    """
    src = SolverPlySource(path_or_paths, model, case_names)
    missing = [c for j, c in enumerate(case_names) if j not in src.case_index]
    if missing:
        raise ResultantsError(f"no solver ply values for case(s) {missing}; the files have {list(src.file_cases)}",
                              src.files.label)
    return src.read_cells(slice(None)).material


def solver_arrays(values: np.ndarray, spec: SolverPlies, model: Model) -> dict[str, np.ndarray]:
    """The cell arrays a solver would write for one case under ``spec`` (the inverse of reading).

    ``values`` (ncell, maxply, 3, 5) in material axes and our conventions; plies past a cell's count are
    written as 0. Locations must be per-ply points (``pattern`` and ``points``) and the axes material,
    element or laminate. For tests, examples and converters.
    """
    v = np.array(values, dtype=float)[None]
    if spec.axes != "material":
        alpha = axes_angle(spec, model, None)
        v = material_to_element(v, np.nan_to_num(ply_angles(model) - alpha[:, None])[None, :, :, None],
                                spec.quantity)
    if spec.quantity == "strain" and spec.shear == "tensor":
        v[..., 2:] /= 2.0
    nply = model.nply_of_cell()
    if spec.ply_order == "top-down":
        out = np.full_like(v, np.nan)
        for n in np.unique(nply):
            cells = nply == n
            out[:, cells, :n] = v[:, cells, :n][:, :, ::-1]
        v = out
    v = np.nan_to_num(v[0] / spec.scale)
    out = {}
    for loc in spec.locations:
        if loc.kind != "point" or loc.ply is not None:
            raise ValueError("solver_arrays writes per-ply point locations only")
        q = int(round(loc.value * 2))
        cols = list(zip(spec.components, spec.slots))
        for k in range(v.shape[1]):
            if "{component}" in loc.array:
                out.update({spec.name(loc.array, k, c): v[:, k, q, s] for c, s in cols if s >= 0})
            else:
                out[spec.name(loc.array, k)] = np.stack([v[:, k, q, s] if s >= 0 else np.zeros(len(v))
                                                         for _, s in cols], axis=1)
    return out
