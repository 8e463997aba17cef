"""The solver's per-ply stresses or strains, read as the ``[solver_plies]`` table of the definition maps them.

The table itself is parsed with the definition (:mod:`bridge.definition.solver_plies`, docs/compare.md).
"""

from __future__ import annotations

from typing import Mapping, Sequence

import numpy as np

from postproc.compare import element_to_material, material_to_element
from shells.errors import InputError, ResultantsError

from bridge.definition.solver_plies import SolverPlies
from bridge.model.build import Model
from bridge.recover.files import open_step_files


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
    files = open_step_files(path_or_paths, n)
    names, src = files.names, files.label
    try:
        cases = []
        for i in _case_order(names, case_names, src):
            if files.h5_path is not None:
                raise ResultantsError("an HDF5 /resultants file holds no ply values; give the solver's ply "
                                      "output (VTU, XDMF)")
            cases.append(_case_values(files.arrays(i), spec, n, nply, f" in case {names[i]!r}"))
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

