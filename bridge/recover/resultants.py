"""Solver shell resultants per load case, read into one array (n_cases, n_cells, 8).

Component order (last axis): Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy — N and Q in
force/length, M in moment/length (= force), signs of docs/conventions.md, in
the element frame once :func:`read_resultants` returns.

Inputs
------
(a) An XDMF time series: one grid per load case (names from an
    ``<Information Name="case">`` element, else the ``<Time>`` value).
(b) VTU (or any mesh format plybridge reads): a list of files, one case each,
    named by the file stem; or one file whose cell arrays carry a case suffix
    after :data:`CASE_SEPARATOR` (``N@case1``, ``M@case1``, ...). A single file
    without suffixes is one case named by its stem.
(c) HDF5 with dataset ``/resultants`` (n_cases, n_cells, 8) and attribute
    ``case_names`` (see :func:`write_resultants_h5`).

Cell arrays default to ``N`` (3 components: x, y, xy), ``M`` (3) and ``Q``
(2: xz, yz); :class:`ResultantFields` renames them or names eight scalars.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from bridge.atomic import atomic_path
from bridge.definition.resultants import COMPONENTS, ResultantFields, ResultantSettings
from bridge.model.frames import in_plane
from bridge.mesh.shell import ShellMesh
from shells.errors import InputError, ResultantsError

#: Separator between a field name and a load-case name in one-file inputs: ``N@case1``.
CASE_SEPARATOR = "@"
H5_DATASET = "resultants"
H5_CHUNK_CELLS = 65536
_HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"


def _few(ids: np.ndarray, k: int = 6) -> str:
    return ", ".join(map(str, ids[:k])) + (" ..." if len(ids) > k else "")


def assemble(arrays: Mapping[str, np.ndarray], n_cells: int, fields: ResultantFields = ResultantFields(),
             where: str = "") -> np.ndarray:
    """Gather the named cell arrays of one case into (n_cells, 8) float64.

    Raises
    ------
    ResultantsError
        Missing arrays (naming them and what is there), wrong component counts
        or a cell count other than ``n_cells``.
    """
    layout = fields.layout()
    missing = [name for name, _ in layout if name not in arrays]
    if missing:
        raise ResultantsError(f"missing resultant array(s) {', '.join(map(repr, missing))}{where}; found "
                              f"{', '.join(map(repr, sorted(arrays))) or 'no cell arrays'}. Set the array "
                              "names in the resultant fields")
    out = np.zeros((n_cells, 8))
    for name, sl in layout:
        a0 = np.asarray(arrays[name])
        want = sl.stop - sl.start
        a = a0[:, None] if a0.ndim == 1 else a0
        if a.ndim != 2 or a.shape[1] != want:
            raise ResultantsError(f"array {name!r}{where} has shape {a0.shape}; expected "
                                  f"({n_cells}, {want}) ({want} component(s))")
        if a.shape[0] != n_cells:
            raise ResultantsError(f"array {name!r}{where} has {a.shape[0]} cells but the mesh has "
                                  f"{n_cells}; use the result file of this mesh")
        out[:, sl] = a
    return out


def nonfinite_mask(R: np.ndarray) -> np.ndarray:
    """True where a (case, cell) has any NaN or infinite component; shape R.shape[:-1]."""
    return ~np.isfinite(np.asarray(R)).all(axis=-1)


def apply_settings(R: np.ndarray, settings: ResultantSettings) -> np.ndarray:
    """Unit scales and twist sign on resultants (..., 8); returns a new array."""
    out = np.array(R, dtype=np.float64)
    out[..., 0:3] *= settings.force_scale / settings.length_scale
    out[..., 6:8] *= settings.force_scale / settings.length_scale
    out[..., 3:6] *= settings.force_scale
    out[..., 5] *= settings.twist_sign
    return out


def to_element_frame(R: np.ndarray, frame: str, material_angle_deg: np.ndarray | None = None,
                     frames: Sequence[np.ndarray] | None = None, vectors: np.ndarray | None = None) -> np.ndarray:
    """Rotate resultants (..., n_cells, 8) into the element frame; returns a new array.

    Parameters
    ----------
    R : ndarray, shape (..., n_cells, 8)
        Resultants in the axes ``frame``.
    frame : {"element", "laminate", "vectors"}
        ``laminate``: axes at the material angle φ from element x (needs
        ``material_angle_deg``); ``vectors``: x along per-cell ``vectors``
        projected on the element plane, y = n × x (needs ``frames``).
    material_angle_deg : ndarray, shape (n_cells,), optional
        φ in degrees, counter-clockwise about n.
    frames : (x, y, n), optional
        Element frames, each (n_cells, 3).
    vectors : ndarray, shape (n_cells, 3), optional
        Global x vectors of the resultant axes.

    Notes
    -----
    With θ the angle of the given axes from element x, N and M rotate as
    stress vectors, ``N_e = T(θ) N``, T of docs/conventions.md; Q as a vector,
    ``Q_e = [[c, −s], [s, c]] Q``.
    """
    R = np.asarray(R, dtype=np.float64)
    if frame == "element":
        return R.copy()
    if frame == "laminate":
        if material_angle_deg is None:
            raise ResultantsError("resultants in laminate axes need the material angle of every cell")
        theta = np.radians(np.asarray(material_angle_deg, dtype=np.float64))
    elif frame == "vectors":
        if vectors is None or frames is None:
            raise ResultantsError("resultants along per-cell vectors need the vectors and the element frames")
        x, y, n = (np.asarray(f) for f in frames)
        v = np.asarray(vectors, dtype=np.float64)
        if v.shape != x.shape:
            raise ResultantsError(f"per-cell x vectors have shape {v.shape}; expected {x.shape}")
        u, near = in_plane(v, n)
        if near.any():
            ids = np.flatnonzero(near)
            raise ResultantsError(f"per-cell x vectors within 5° of the normal (or zero) on {len(ids)} "
                                  f"cell(s): {_few(ids)}; fix the vector array")
        theta = np.arctan2(np.einsum("ij,ij->i", u, y), np.einsum("ij,ij->i", u, x))
    else:
        raise ResultantsError(f"resultant frame {frame!r} unknown; use element, laminate or vectors")
    if theta.shape != R.shape[-2:-1]:
        raise ResultantsError(f"{theta.size} angles for {R.shape[-2]} cells")
    c, s = np.cos(theta), np.sin(theta)
    T = np.stack([np.stack([c * c, s * s, -2 * c * s], -1), np.stack([s * s, c * c, 2 * c * s], -1),
                  np.stack([c * s, -c * s, c * c - s * s], -1)], -2)
    Rq = np.stack([np.stack([c, -s], -1), np.stack([s, c], -1)], -2)
    out = np.empty_like(R)
    out[..., 0:3] = np.einsum("cij,...cj->...ci", T, R[..., 0:3])
    out[..., 3:6] = np.einsum("cij,...cj->...ci", T, R[..., 3:6])
    out[..., 6:8] = np.einsum("cij,...cj->...ci", Rq, R[..., 6:8])
    return out


def resultant_arrays(R_case: np.ndarray, fields: ResultantFields = ResultantFields()) -> dict[str, np.ndarray]:
    """Split one case (n_cells, 8) into the named cell arrays of ``fields`` (the inverse of :func:`assemble`)."""
    R_case = np.asarray(R_case, dtype=np.float64)
    return {name: (R_case[:, sl][:, 0] if sl.stop - sl.start == 1 else R_case[:, sl].copy())
            for name, sl in fields.layout()}


# ----------------------------------------------------------------------------- sources

def _h5_source(path: str, n_cells: int):
    import h5py

    with h5py.File(path, "r", locking=False) as h5:
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
    return names, (lambda i: _h5_case(path, i)), {}


def _h5_case(path: str, i: int) -> np.ndarray:
    import h5py

    with h5py.File(path, "r", locking=False) as h5:
        return h5[H5_DATASET][i]


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


def _sources(path_or_paths, n_cells: int):
    """(case names, loader(i) -> arrays or (n_cells, 8), extra cell arrays, source label)."""
    from bridge.mesh.formats import read_mesh, xdmf

    def check(mesh: ShellMesh, src: str):
        if mesh.n_cells != n_cells:
            raise ResultantsError(f"the file has {mesh.n_cells} shell cells but the mesh has {n_cells}; "
                                  "use the result file of this mesh", src)

    if isinstance(path_or_paths, (list, tuple)):
        paths = [str(p) for p in path_or_paths]
        names = [Path(p).stem for p in paths]
        if len(set(names)) != len(names):
            raise ResultantsError(f"case files must have distinct names (the stem is the case name): {names}")
        meshes = []
        for p in paths:
            meshes.append(read_mesh(p))
            check(meshes[-1], p)
        return names, (lambda i: meshes[i].cell_data), dict(meshes[0].cell_data), ", ".join(paths)
    path = str(path_or_paths)
    try:
        with open(path, "rb") as fh:
            head = fh.read(4096)
    except FileNotFoundError:
        raise ResultantsError("file not found; check the path", path) from None
    if head.startswith(_HDF5_SIGNATURE):
        names, load, extra = _h5_source(path, n_cells)
        return names, load, extra, path
    if xdmf.sniff(head):
        mesh, steps = xdmf.read_series(path)
        check(mesh, path)
        return [s.name for s in steps], (lambda i: steps[i].cell_data), dict(mesh.cell_data), path
    mesh = read_mesh(path)
    check(mesh, path)
    names, per_case = _mesh_cases(mesh, Path(path).stem)
    return names, (lambda i: per_case[names[i]]), dict(mesh.cell_data), path


def read_resultants(path_or_paths, n_cells: int, fields: ResultantFields = ResultantFields(),
                    settings: ResultantSettings = ResultantSettings(), *, cases: Sequence[str] | None = None,
                    material_angle_deg: np.ndarray | None = None, frames: Sequence[np.ndarray] | None = None,
                    vectors: np.ndarray | None = None,
                    allow_nonfinite: bool = False) -> tuple[tuple[str, ...], np.ndarray]:
    """Read the load cases' resultants, in definition units and the element frame.

    Parameters
    ----------
    path_or_paths : path or list of paths
        One file (XDMF series, HDF5, or a mesh file with suffixed or plain
        arrays) or a list of mesh files, one case each; see the module notes.
    n_cells : int
        Shell cells of the mesh (the global cell index).
    fields, settings : ResultantFields, ResultantSettings
        Array names; frame, twist sign and unit scales. Scaling and the twist
        sign apply in the solver's axes, before the rotation.
    cases : sequence of str, optional
        Keep these cases, in this order (default: all, in file order).
    material_angle_deg : ndarray (n_cells,), optional
        φ per cell, for ``settings.frame == "laminate"``.
    frames : (x, y, n), optional
        Element frames, for ``settings.frame == "vectors"``.
    vectors : ndarray (n_cells, 3), optional
        Per-cell x vectors; default the cell array ``settings.vectors`` of the file.
    allow_nonfinite : bool
        Keep NaN/inf values (flag them with :func:`nonfinite_mask`) instead of raising.

    Returns
    -------
    case_names : tuple of str
    R : ndarray, shape (n_cases, n_cells, 8), float64
        Nx, Ny, Nxy, Mx, My, Mxy (force/length, moment/length), Qx, Qy.

    Raises
    ------
    ResultantsError
        Missing or mis-shaped arrays, cell-count mismatch, non-finite values,
        unknown case names, duplicate case names.
    """
    names, load, extra, src = _sources(path_or_paths, n_cells)
    try:
        if len(set(names)) != len(names):
            raise ResultantsError(f"duplicate case names {names}; name each load case once")
        pick = list(range(len(names)))
        if cases is not None:
            unknown = [c for c in cases if c not in names]
            if unknown:
                raise ResultantsError(f"unknown load case(s) {unknown}; the file has {names}")
            pick = [names.index(c) for c in cases]
        R = np.empty((len(pick), n_cells, 8))
        for k, i in enumerate(pick):
            got = load(i)
            R[k] = got if isinstance(got, np.ndarray) else assemble(got, n_cells, fields,
                                                                     f" in case {names[i]!r}")
        if not allow_nonfinite:
            bad = nonfinite_mask(R)
            if bad.any():
                rows = [f"{names[pick[k]]!r} (cells {_few(np.flatnonzero(bad[k]))})"
                        for k in np.flatnonzero(bad.any(axis=1))]
                raise ResultantsError(f"NaN or infinite resultants in case(s) {'; '.join(rows)}; fix the "
                                      "solver output or allow non-finite values to skip those cells")
        if settings.frame == "vectors" and vectors is None:
            if settings.vectors is None or settings.vectors not in extra:
                raise ResultantsError(f"frame 'vectors' needs the cell array {settings.vectors!r}; found "
                                      f"{', '.join(map(repr, sorted(extra))) or 'no cell arrays'}")
            vectors = extra[settings.vectors]
        R = to_element_frame(apply_settings(R, settings), settings.frame, material_angle_deg, frames, vectors)
    except InputError as exc:
        raise exc.within(src) from None
    return tuple(names[i] for i in pick), R


# ----------------------------------------------------------------------------- writers

def _check_cases(case_names: Sequence[str], R: np.ndarray) -> np.ndarray:
    R = np.asarray(R, dtype=np.float64)
    if R.ndim != 3 or R.shape[2] != 8 or R.shape[0] != len(case_names):
        raise ResultantsError(f"resultants must have shape ({len(case_names)}, cells, 8), got {R.shape}")
    if len(set(case_names)) != len(case_names):
        raise ResultantsError(f"duplicate case names {list(case_names)}")
    return R


def write_resultants_h5(path: str | os.PathLike, case_names: Sequence[str], R: np.ndarray) -> None:
    """Write resultants (n_cases, n_cells, 8) to HDF5 ``/resultants`` atomically.

    Chunks are 1 case × up to 65536 cells × 8, shuffle + gzip; attributes
    ``case_names`` and ``components`` (:data:`COMPONENTS`).
    """
    import h5py

    R = _check_cases(case_names, R)
    with atomic_path(path) as tmp, h5py.File(tmp, "w") as h5:
        ds = h5.create_dataset(H5_DATASET, data=R, chunks=(1, max(1, min(R.shape[1], H5_CHUNK_CELLS)), 8),
                               compression="gzip", compression_opts=4, shuffle=True)
        ds.attrs["case_names"] = np.array([str(c) for c in case_names], dtype=h5py.string_dtype())
        ds.attrs["components"] = np.array(COMPONENTS, dtype=h5py.string_dtype())


def write_resultants_xdmf(path: str | os.PathLike, mesh: ShellMesh, case_names: Sequence[str], R: np.ndarray,
                          fields: ResultantFields = ResultantFields()) -> None:
    """Write resultants as an XDMF time series, one grid per case, arrays named by ``fields``."""
    from bridge.mesh.formats import xdmf

    R = _check_cases(case_names, R)
    xdmf.write_series(path, mesh, [(c, resultant_arrays(R[k], fields)) for k, c in enumerate(case_names)])
