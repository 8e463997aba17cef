"""Result files of a solver, opened once: the kind found from the first bytes, the steps (load cases) named.

Kinds (docs/meshes.md, resultant inputs):

(a) an XDMF time series: one grid per step (names from ``<Information Name="case">``, else ``<Time>``);
(b) mesh files (VTU or any format :mod:`bridge.mesh.formats` reads) whose cell arrays carry a step suffix
    after :data:`CASE_SEPARATOR` (``N@case1``), or none (one step named by the file's stem or folder,
    ``[result_files] case_names``);
(c) point clouds (integration points: a VTU / VTK file of points and point arrays, no shell cells), reduced
    to cells as ``[result_files]`` says (:mod:`bridge.recover.clouds`), named like (b);
(d) HDF5 with dataset ``/resultants`` (n_steps, n_cells, 8) and attribute ``case_names``: read by cell ranges.

Several files are merged by case name: arrays of the same case from different files are joined, other cases
added in order of first appearance. Both the resultants (:mod:`bridge.recover.resultants`) and the solver's
ply values (:mod:`bridge.compare.solver_plies`) are read through :func:`open_step_files`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from shells.errors import MeshError, ResultantsError

from bridge.definition.result_files import ResultFiles
from bridge.definition.schema import check_names
from bridge.mesh.h5_rules import dataset, open_h5, read_names
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
        An HDF5 ``/resultants`` file (read by cell ranges with :func:`read_h5_cells`); None for the other kinds.
    extra : dict
        Cell arrays that belong to no step (e.g. per-cell axes vectors), from every file.
    steps : tuple of dict
        The cell arrays of each step (empty for HDF5).
    notes : tuple of str
        What was done about the files' cell order (:mod:`bridge.recover.cell_order`), for the run summary.
    """

    names: tuple[str, ...]
    label: str
    h5_path: str | None = None
    extra: Mapping[str, np.ndarray] = field(default_factory=dict)
    steps: tuple = field(default=(), repr=False)
    notes: tuple[str, ...] = ()

    def __post_init__(self):
        # Step names become case names printed on stdout and stored: names' rules (docs/scale.md).
        object.__setattr__(self, "names", check_names(self.names, "load case names", ResultantsError, self.label))

    def arrays(self, i: int) -> Mapping[str, np.ndarray]:
        """The cell arrays of step ``i`` (not for HDF5 ``/resultants`` files)."""
        if self.h5_path is not None:
            raise ResultantsError("an HDF5 /resultants file holds resultants only; give the solver's cell "
                                  "arrays (VTU, XDMF)", self.label)
        return self.steps[i]


def _h5_names(path: str, n_cells: int) -> tuple[list[str], str]:
    """The case names of an HDF5 ``/resultants`` file and a note on its columns ('' in our order)."""
    with open_h5(path, ResultantsError) as h5:
        if H5_DATASET not in h5:
            raise ResultantsError(f"no dataset /{H5_DATASET}; found {', '.join(h5) or 'nothing'}", path)
        ds = dataset(h5, H5_DATASET, path, ResultantsError)
        if ds.ndim != 3 or ds.shape[2] != 8:
            raise ResultantsError(f"/{H5_DATASET} has shape {ds.shape}; expected (cases, cells, 8)", path)
        if ds.shape[1] != n_cells:
            raise ResultantsError(f"/{H5_DATASET} has {ds.shape[1]} cells but the mesh has {n_cells}", path)
        names = read_names(ds, "case_names", path, ds.shape[0], ResultantsError)
        if len(names) != ds.shape[0]:
            raise ResultantsError(f"attribute case_names has {len(names)} names for {ds.shape[0]} cases", path)
        if "components" not in ds.attrs:
            note = (f"/{H5_DATASET} has no components attribute: its columns were taken in the documented order "
                    "Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy")
        else:
            note = "" if h5_columns(ds, path) is None else (
                f"/{H5_DATASET} lists its columns in another order (attribute components); mapped by name")
    return names, note


def h5_columns(ds, path: str) -> np.ndarray | None:
    """The columns of ``/resultants`` in our order (Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy) from its ``components``
    attribute: None when they are already in that order (or the attribute is absent: the documented order),
    else the column of each component.

    Raises
    ------
    ResultantsError
        An attribute that is not the eight names, each once.
    """
    from bridge.definition.resultants import COMPONENTS

    if "components" not in ds.attrs:
        return None
    names = read_names(ds, "components", path, None, ResultantsError)
    if sorted(names) != sorted(COMPONENTS):
        twice = sorted({n for n in names if names.count(n) > 1})
        unknown = sorted(set(names) - set(COMPONENTS))
        what = (f"names {', '.join(twice)} twice" if twice else f"holds unknown names {', '.join(unknown)}"
                if unknown else f"has {len(names)} names")
        raise ResultantsError(f"/{H5_DATASET} attribute components {what}; give each of "
                              f"{', '.join(COMPONENTS)} once (the column order of the dataset)", path)
    order = np.array([names.index(c) for c in COMPONENTS])
    return None if np.array_equal(order, np.arange(len(COMPONENTS))) else order


def read_h5_cells(path: str, cells: slice | np.ndarray) -> np.ndarray:
    """(n_steps, ncell, 8) values of a cell slice (or increasing cell ids) of an HDF5 ``/resultants`` file, in
    the file's units and axes, columns in our order (:func:`h5_columns`)."""
    with open_h5(path, ResultantsError) as h5:
        ds = dataset(h5, H5_DATASET, path, ResultantsError)
        order = h5_columns(ds, path)
        values = ds[:, cells, :]
    return values if order is None else values[..., order]


def split_cases(cell_data: Mapping[str, np.ndarray], default: str) -> tuple[dict[str, dict], dict]:
    """Cell arrays → ({case: arrays}, arrays of no case); arrays without ``@case`` are one case ``default``."""
    plain = {k: v for k, v in cell_data.items() if CASE_SEPARATOR not in k}
    cases: dict[str, dict] = {}
    for key, arr in cell_data.items():
        if CASE_SEPARATOR in key:
            field_name, _, case = key.partition(CASE_SEPARATOR)
            cases.setdefault(case, {})[field_name] = arr
    if not cases:
        return {default: plain}, {}
    return cases, plain


def _check_cells(n_found: int, n_cells: int, src: str) -> None:
    if n_found != n_cells:
        raise ResultantsError(f"the file has {n_found} shell cells but the mesh has {n_cells}; "
                              "use the result file of this mesh", src)


def _ordered(file_mesh: ShellMesh, n_cells: int, path: str, mesh: ShellMesh | None, notes: list):
    """The cell order of a file with its own cells against the model mesh (``bridge.recover.cell_order``)."""
    from bridge.recover.cell_order import CellOrder, match_cells

    _check_cells(file_mesh.n_cells, n_cells, path)
    order = CellOrder() if mesh is None else match_cells(mesh, file_mesh, path)
    if order.note and order.note not in notes:
        notes.append(order.note)
    return order


def _file_cases(path: str, head: bytes, n_cells: int, options: ResultFiles,
                mesh: ShellMesh | None, notes: list) -> tuple[dict[str, dict], dict]:
    """One non-HDF5 file: ({case: cell arrays}, arrays of no case), in the model mesh's cell order."""
    from bridge.mesh.formats import read_mesh, xdmf
    from bridge.recover.clouds import cloud_to_cells

    default = Path(path).parent.name if options.case_names == "folder" else Path(path).stem
    if xdmf.sniff(head):
        grid_mesh, steps = xdmf.read_series(path, lazy=True)
        order = _ordered(grid_mesh, n_cells, path, mesh, notes)
        if len(steps) == 1:
            return split_cases(order.apply(steps[0].cell_data), default)
        return {s.name: order.apply(s.cell_data) for s in steps}, order.apply(steps[0].cell_data)
    from bridge.mesh.cloud import is_point_cloud, read_point_cloud

    found = None
    if not is_point_cloud(head):
        try:
            found = read_mesh(path)
        except MeshError as err:
            if "no shell cells" not in err.detail:
                raise
    if found is None:
        arrays, note = cloud_to_cells(read_point_cloud(path), n_cells, options, mesh)
        if note:
            notes.append(note)
        return split_cases(arrays, default)
    return split_cases(_ordered(found, n_cells, path, mesh, notes).apply(found.cell_data), default)


#: The estimate of reading a file whole above which a note suggests XDMF + HDF5.
WHOLE_READ_NOTE_BYTES = 1 << 30
#: The words that mark that note (compare repeats it in its summary).
WHOLE_READ_MARK = " read whole (about "


def whole_read_bytes(path: str) -> int:
    """Estimated peak memory of reading a VTU (or other meshio file) whole: the file's text plus twice its
    arrays (decoded bytes and arrays held at once). The arrays' size of a compressed VTU comes from each binary
    DataArray's block header (uncompressed sizes), read in 64 MiB pieces; otherwise it is the file's size.
    Measured: 1150 MiB peak for a 396 MB zlib VTU of 200,000 cells (estimate 1.0 GB over a 314 MiB base)."""
    import base64
    import os
    import re

    size = os.path.getsize(path)
    arrays, tail = 0, b""
    with open(path, "rb") as fh:
        head = fh.read(4096)
        if b"compressor=" not in head[:1000]:
            return 3 * size                                        # text, decoded bytes, arrays
        header = 8 if b'header_type="UInt64"' in head[:1000] else 4        # 3 numbers: 16 or 32 base64 digits
        pattern = re.compile(rb'<DataArray[^>]*format="binary"[^>]*>\s*([A-Za-z0-9+/]{%d})' % (4 * header))
        fh.seek(0)
        while piece := fh.read(1 << 26):
            text, cut = tail + piece, 0
            for m in pattern.finditer(text):
                n, block, last = np.frombuffer(base64.b64decode(m.group(1))[:3 * header], f"<u{header}")
                arrays += int(max(n - 1, 0) * block + (last if n else 0)) if last else int(n * block)
                cut = m.end()
            tail = text[max(cut, len(text) - 4096):]
    return size + 2 * arrays


def whole_read_notes(paths: Sequence[str], heads: Sequence[bytes]) -> list[str]:
    """Refuse, before reading, result files read whole (all but XDMF and HDF5) whose estimated memory
    (:func:`whole_read_bytes`) exceeds what is available; a note when it is over 1 GiB."""
    from bridge.guards import check_memory, size_text

    whole = [p for p, h in zip(paths, heads) if b"<Xdmf" not in h and not h.startswith(HDF5_SIGNATURE)]
    if not whole:
        return []
    need = sum(whole_read_bytes(p) for p in whole)
    fix = "give the values as XDMF with HDF5 data (read by row blocks), or use a machine with more memory"
    check_memory(need, f"reading {', '.join(Path(p).name for p in whole)} whole (VTU and other meshio files are "
                 "not read by blocks)", fix, whole[0])
    if need <= WHOLE_READ_NOTE_BYTES:
        return []
    return [f"{', '.join(Path(p).name for p in whole)}{WHOLE_READ_MARK}{size_text(need)} of memory): at this "
            "size give the values as XDMF with HDF5 data, which is read by row blocks"]


def open_step_files(path_or_paths: str | Sequence[str], n_cells: int, options: ResultFiles = ResultFiles(),
                    mesh: ShellMesh | None = None) -> StepFiles:
    """Find the kind of a result input (once), name its steps and merge several files by case name.

    Parameters
    ----------
    path_or_paths : path or sequence of paths
        One file of any kind, or several files of kinds (a)–(c) (module notes).
    n_cells : int
        Shell cells of the model mesh: every file must have as many (point clouds: reduced to as many).
    options : ResultFiles
        The definition's ``[result_files]``.
    mesh : ShellMesh, optional
        The model mesh (cell ids and centroids, for point clouds). A file with its own cells is matched to it and
        its arrays come back in the mesh's cell order, or the file is refused (:mod:`bridge.recover.cell_order`);
        :attr:`StepFiles.notes` says what was mapped or assumed.
    """
    paths = [str(p) for p in path_or_paths] if isinstance(path_or_paths, (list, tuple)) else [str(path_or_paths)]
    label = ", ".join(paths)
    heads = []
    for p in paths:
        try:
            with open(p, "rb") as fh:
                heads.append(fh.read(4096))
        except FileNotFoundError:
            raise ResultantsError("file not found; check the path", p) from None
    if any(h.startswith(HDF5_SIGNATURE) for h in heads):
        if len(paths) != 1:
            raise ResultantsError("an HDF5 /resultants file holds every case; give it alone", label)
        from bridge.recover.cell_order import ASSUMED_NOTE

        names, column_note = _h5_names(paths[0], n_cells)
        notes = ((ASSUMED_NOTE,) if mesh is not None else ()) + ((column_note,) if column_note else ())
        return StepFiles(tuple(names), label, paths[0], notes=notes)
    notes: list[str] = whole_read_notes(paths, heads)
    merged: dict[str, dict] = {}
    origin: dict[tuple[str, str], str] = {}
    extra: dict[str, np.ndarray] = {}
    for p, head in zip(paths, heads):
        cases, plain = _file_cases(p, head, n_cells, options, mesh, notes)
        extra.update(plain)
        for case, arrays in cases.items():
            into = merged.setdefault(case, {})
            for name, arr in arrays.items():
                if (case, name) in origin:
                    raise ResultantsError(f"array {name!r} of case {case!r} is in both {origin[case, name]} and {p}; "
                                          "give each array of a case once", label)
                origin[case, name] = p
                into[name] = arr
        if len(cases) == 1 and not plain:
            extra.update(next(iter(cases.values())))
    return StepFiles(tuple(merged), label, None, extra, tuple(merged.values()), tuple(notes))
