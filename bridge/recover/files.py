"""Result files of a solver, opened once: the format found from the first bytes, the steps (load cases) named.

Kinds (docs/meshes.md, resultant inputs):

(a) an XDMF time series: one grid per step (names from ``<Information Name="case">``, else ``<Time>``);
(b) mesh files (VTU or any format :mod:`bridge.mesh.formats` reads): a list of files, one step each, named by
    the file stem; or one file whose cell arrays carry a step suffix after :data:`CASE_SEPARATOR`
    (``N@case1``); a single file without suffixes is one step named by its stem;
(c) HDF5 with dataset ``/resultants`` (n_steps, n_cells, 8) and attribute ``case_names``: read by cell ranges.

Both the resultants (:mod:`bridge.recover.resultants`) and the solver's ply values
(:mod:`bridge.compare.solver_plies`) are read through :func:`open_step_files`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Mapping, Sequence

import numpy as np

from shells.errors import ResultantsError

from bridge.mesh.shell import ShellMesh

#: Separator between a field name and a load-case name in one-file inputs: ``N@case1``.
CASE_SEPARATOR = "@"
H5_DATASET = "resultants"
HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"


@dataclass(frozen=True)
class StepFiles:
    """The steps of a result input, found once.

    Attributes
    ----------
    names : tuple of str
        Step names in input order.
    label : str
        The file (or files) named in error messages.
    h5_path : str or None
        An HDF5 ``/resultants`` file (read by cell ranges with :func:`read_h5_cells`); None for mesh kinds.
    extra : dict
        Cell arrays of the (first) file that belong to no step (e.g. per-cell axes vectors).
    """

    names: tuple[str, ...]
    label: str
    h5_path: str | None = None
    extra: Mapping[str, np.ndarray] = field(default_factory=dict)
    loader: Callable[[int], Mapping[str, np.ndarray]] | None = field(default=None, repr=False)

    def arrays(self, i: int) -> Mapping[str, np.ndarray]:
        """The cell arrays of step ``i`` (mesh kinds only)."""
        if self.loader is None:
            raise ResultantsError("an HDF5 /resultants file holds resultants only; give the solver's cell "
                                  "arrays (VTU, XDMF)", self.label)
        return self.loader(i)


def _h5_names(path: str, n_cells: int) -> list[str]:
    import h5py

    try:
        h5 = h5py.File(path, "r", locking=False)
    except OSError:
        raise ResultantsError("an HDF5 file that cannot be opened (truncated or damaged); write it again",
                              path) from None
    with h5:
        if H5_DATASET not in h5:
            raise ResultantsError(f"no dataset /{H5_DATASET}; found {', '.join(h5) or 'nothing'}", path)
        ds = h5[H5_DATASET]
        if ds.ndim != 3 or ds.shape[2] != 8:
            raise ResultantsError(f"/{H5_DATASET} has shape {ds.shape}; expected (cases, cells, 8)", path)
        if ds.shape[1] != n_cells:
            raise ResultantsError(f"/{H5_DATASET} has {ds.shape[1]} cells but the mesh has {n_cells}", path)
        raw = np.atleast_1d(ds.attrs.get("case_names", []))
        names = [n.decode() if isinstance(n, bytes) else str(n) for n in raw]
        if len(names) != ds.shape[0]:
            raise ResultantsError(f"attribute case_names has {len(names)} names for {ds.shape[0]} cases", path)
    return names


def read_h5_cells(path: str, cells: slice | np.ndarray) -> np.ndarray:
    """(n_steps, ncell, 8) raw values of a cell slice (or increasing cell ids) of an HDF5 ``/resultants`` file."""
    import h5py

    with h5py.File(path, "r", locking=False) as h5:
        return h5[H5_DATASET][:, cells, :]


def _mesh_cases(mesh: ShellMesh, stem: str) -> tuple[list[str], dict[str, dict]]:
    plain = {k: v for k, v in mesh.cell_data.items() if CASE_SEPARATOR not in k}
    cases: dict[str, dict] = {}
    for key, arr in mesh.cell_data.items():
        if CASE_SEPARATOR in key:
            field_name, _, case = key.partition(CASE_SEPARATOR)
            cases.setdefault(case, {})[field_name] = arr
    if not cases:
        return [stem], {stem: plain}
    return list(cases), {c: {**plain, **a} for c, a in cases.items()}


def _check_cells(mesh: ShellMesh, n_cells: int, src: str) -> None:
    if mesh.n_cells != n_cells:
        raise ResultantsError(f"the file has {mesh.n_cells} shell cells but the mesh has {n_cells}; "
                              "use the result file of this mesh", src)


def open_step_files(path_or_paths: str | Sequence[str], n_cells: int) -> StepFiles:
    """Find the kind of a result input (once) and name its steps.

    Parameters
    ----------
    path_or_paths : path or sequence of paths
        One file of any kind, or several mesh files (one step each, named by the stem).
    n_cells : int
        Shell cells of the model mesh: every file must have as many.
    """
    from bridge.mesh.formats import read_mesh, xdmf

    if isinstance(path_or_paths, (list, tuple)) and len(path_or_paths) == 1:
        path_or_paths = path_or_paths[0]
    if isinstance(path_or_paths, (list, tuple)):
        paths = [str(p) for p in path_or_paths]
        names = [Path(p).stem for p in paths]
        if len(set(names)) != len(names):
            raise ResultantsError(f"case files must have distinct names (the stem is the case name): {names}")
        meshes = []
        for p in paths:
            meshes.append(read_mesh(p))
            _check_cells(meshes[-1], n_cells, p)
        return StepFiles(tuple(names), ", ".join(paths), None, dict(meshes[0].cell_data),
                         lambda i: meshes[i].cell_data)
    path = str(path_or_paths)
    try:
        with open(path, "rb") as fh:
            head = fh.read(4096)
    except FileNotFoundError:
        raise ResultantsError("file not found; check the path", path) from None
    if head.startswith(HDF5_SIGNATURE):
        return StepFiles(tuple(_h5_names(path, n_cells)), path, path)
    if xdmf.sniff(head):
        mesh, steps = xdmf.read_series(path)
        _check_cells(mesh, n_cells, path)
        return StepFiles(tuple(s.name for s in steps), path, None, dict(mesh.cell_data),
                         lambda i: steps[i].cell_data)
    mesh = read_mesh(path)
    _check_cells(mesh, n_cells, path)
    names, per_case = _mesh_cases(mesh, Path(path).stem)
    return StepFiles(tuple(names), path, None, dict(mesh.cell_data), lambda i: per_case[names[i]])
