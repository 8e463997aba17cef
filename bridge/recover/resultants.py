"""Solver shell resultants per load case: one source that every command reads them through.

Component order (last axis): Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy — N and Q in
force/length, M in moment/length (= force), signs of docs/conventions.md, in
the element frame and the definition's units once read.

:class:`ResultantSource` finds the input kind once (:func:`bridge.recover.files.open_step_files`)
and converts raw values in one place (:func:`convert`: unit scales and twist
sign in the solver's axes, then the rotation into the element frame). It
serves ``recover`` (blocks of cells), the distributed block tasks (through
its picklable :attr:`ResultantSource.reader`) and ``compare``.

Cell arrays default to ``N`` (3 components: x, y, xy), ``M`` (3) and ``Q``
(2: xz, yz); :class:`ResultantFields` renames them or names eight scalars.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from shells.errors import InputError, ResultantsError

from bridge.definition.result_files import ResultFiles
from bridge.definition.resultants import TENSOR6, ResultantFields, ResultantSettings, component_index
from bridge.model.frames import in_plane
from bridge.recover.files import StepFiles, open_step_files, read_h5_cells
from bridge.recover.writers import resultant_arrays, write_resultants_h5, write_resultants_xdmf  # noqa: F401


def _few(ids: np.ndarray, k: int = 6) -> str:
    return ", ".join(map(str, ids[:k])) + (" ..." if len(ids) > k else "")


def _columns(arrays: Mapping[str, np.ndarray], name: str, n_cells: int, where: str) -> np.ndarray:
    """The array ``name`` as (n_cells, k) float64."""
    a0 = np.asarray(arrays[name])
    a = a0[:, None] if a0.ndim == 1 else a0.reshape(len(a0), -1) if a0.ndim > 2 else a0
    if a.ndim != 2:
        raise ResultantsError(f"array {name!r}{where} has shape {a0.shape}; expected one row per cell")
    if a.shape[0] != n_cells:
        raise ResultantsError(f"array {name!r}{where} has {a.shape[0]} cells but the mesh has "
                              f"{n_cells}; use the result file of this mesh")
    return np.asarray(a, dtype=np.float64)


def tensors(a: np.ndarray, tensor_order: str | None, where: str) -> np.ndarray:
    """(n, 9) row-major or (n, 6) symmetric tensor arrays → (n, 3, 3)."""
    if a.shape[1] == 9:
        return a.reshape(-1, 3, 3)
    if a.shape[1] != 6:
        raise ResultantsError(f"{where}: global axes need whole 3 × 3 tensor arrays (9 components, or 6 with "
                              f"[result_files] tensor_order); this one has {a.shape[1]}")
    out = np.empty((len(a), 3, 3))
    for j, name in enumerate(TENSOR6[tensor_order] if tensor_order else ()):
        r, c = "xyz".index(name[0]), "xyz".index(name[1])
        out[:, r, c] = out[:, c, r] = a[:, j]
    if tensor_order is None:
        component_index("xx", 6, None, where)          # raises: the order must be declared
    return out


def project(T: np.ndarray, frames: Sequence[np.ndarray]) -> np.ndarray:
    """Global tensors (n, 3, 3) in each cell's element frame: Eᵀ T E with E = [x y n] (columns)."""
    E = np.stack([np.asarray(f, dtype=np.float64) for f in frames], axis=-1)
    return np.einsum("cai,cab,cbj->cij", E, T, E)


def assemble(arrays: Mapping[str, np.ndarray], n_cells: int, fields: ResultantFields = ResultantFields(),
             where: str = "", tensor_order: str | None = None,
             frames: Sequence[np.ndarray] | None = None) -> np.ndarray:
    """Gather the named arrays of one case into (n_cells, 8) float64.

    Components are picked as ``fields`` says (:func:`bridge.definition.resultants.component_index`). With
    ``frames`` (global axes), N, M and Q are read from whole tensor arrays and projected on each cell's
    plane: N = (Txx, Tyy, Txy), Q = (Txz, Tyz) of the projected tensor T.

    Raises
    ------
    ResultantsError
        Missing arrays (naming them and what is there), wrong component counts
        or a cell count other than ``n_cells``.
    """
    layout = fields.layout()
    missing = [name for name, _, _ in layout if name not in arrays]
    if missing:
        raise ResultantsError(f"missing resultant array(s) {', '.join(map(repr, missing))}{where}; found "
                              f"{', '.join(map(repr, sorted(arrays))) or 'no cell arrays'}. Set the array "
                              "names in [fields]")
    out = np.zeros((n_cells, 8))
    for name, sl, picks in layout:
        a = _columns(arrays, name, n_cells, where)
        want = sl.stop - sl.start
        if frames is not None:
            if fields.scalars is not None:
                raise ResultantsError("global axes need tensor arrays for N, M and Q, not eight scalars")
            T = project(tensors(a, tensor_order, f"array {name!r}{where}"), frames)
            out[:, sl] = (np.stack([T[:, 0, 0], T[:, 1, 1], T[:, 0, 1]], 1) if want == 3
                          else np.stack([T[:, 0, 2], T[:, 1, 2]], 1))
            continue
        if picks is not None:
            a = a[:, [component_index(c, a.shape[1], tensor_order, f"array {name!r}{where}") for c in picks]]
        elif a.shape[1] != want:
            raise ResultantsError(f"array {name!r}{where} has {a.shape[1]} component(s); expected {want}, or "
                                  "pick them: { array = ..., components = [...] } in [fields]")
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
    if frame in ("element", "global"):      # global tensors were projected on the element planes when read
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
        raise ResultantsError(f"resultant frame {frame!r} unknown; use element, laminate, global or vectors")
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


@dataclass(frozen=True)
class CellAxes:
    """What the rotation into the element frame needs about some cells (any entry may be None).

    Attributes
    ----------
    phi : float64 (ncell,)
        Material angle, degrees (for resultants in laminate axes).
    frames : (x, y, n), each float64 (ncell, 3)
        Element frames (for per-cell vectors).
    """

    phi: np.ndarray | None = None
    frames: tuple | None = None

    def take(self, cells: slice | np.ndarray) -> "CellAxes":
        return CellAxes(None if self.phi is None else self.phi[cells],
                        None if self.frames is None else tuple(f[cells] for f in self.frames))


def convert(raw: np.ndarray, settings: ResultantSettings, axes: CellAxes = CellAxes(),
            vectors: np.ndarray | None = None) -> np.ndarray:
    """Raw solver resultants (..., ncell, 8) → definition units and the element frame (a new array).

    The one place unit scales, the twist sign (both in the solver's axes) and the frame rotation are applied.
    """
    return to_element_frame(apply_settings(raw, settings), settings.frame, axes.phi, axes.frames, vectors)


@dataclass(frozen=True)
class H5Steps:
    """A picklable reader of an HDF5 ``/resultants`` file by cell ranges (what a block task opens by path)."""

    path: str
    settings: ResultantSettings

    def read(self, cells: slice | np.ndarray, axes: CellAxes) -> np.ndarray:
        """(n_steps, ncell, 8) of a cell slice or increasing cell ids, converted (:func:`convert`)."""
        return convert(read_h5_cells(self.path, cells), self.settings, axes)


class ResultantSource:
    """The input steps' resultants, read by cells, in the element frame and definition units.

    An HDF5 ``/resultants`` file is streamed by cell ranges (block tasks open it by path through
    :attr:`reader`); the other kinds are read whole, once, converted, and sliced.

    Parameters
    ----------
    path_or_paths : path or sequence of paths
        One file of any kind, or mesh files one step each (:func:`bridge.recover.files.open_step_files`).
    n_cells : int
    fields, settings : ResultantFields, ResultantSettings
    axes : CellAxes
        Material angles and element frames of every cell (for laminate axes and per-cell vectors).
    options : ResultFiles
    mesh : ShellMesh, optional
        The model mesh: point clouds are reduced onto it, and a file's own cells are checked against it
        (:mod:`bridge.recover.cell_order`); what was mapped or assumed is in :attr:`notes`.
    """

    def __init__(self, path_or_paths, n_cells: int, fields: ResultantFields = ResultantFields(),
                 settings: ResultantSettings = ResultantSettings(), axes: CellAxes = CellAxes(),
                 options: ResultFiles = ResultFiles(), mesh=None):
        self.files: StepFiles = open_step_files(path_or_paths, n_cells, options, mesh)
        self.notes = list(self.files.notes)
        self.options = options
        self.names = self.files.names
        self.settings = settings
        self.axes = axes
        self.reader: H5Steps | None = None
        self._data: np.ndarray | None = None
        try:
            if len(set(self.names)) != len(self.names):
                raise ResultantsError(f"duplicate case names {list(self.names)}; name each load case once")
            if self.files.h5_path is not None:
                if settings.frame in ("vectors", "global"):
                    raise ResultantsError(f"frame = {settings.frame!r} is not available for HDF5 resultants; give "
                                          "the resultants in the element frame or laminate axes ([resultants] frame)")
                self.reader = H5Steps(self.files.h5_path, settings)
            else:
                self._data = self._read_all(n_cells, fields)
        except InputError as exc:
            raise exc.within(self.files.label) from None

    @classmethod
    def of_model(cls, path_or_paths, model) -> "ResultantSource":
        """The resultants of a model, with the definition's ``[fields]`` and ``[resultants]`` settings."""
        return cls(path_or_paths, model.n_cells, model.defn.fields, model.defn.resultants,
                   CellAxes(model.phi, (model.frame_x, model.frame_y, model.normal)), model.defn.result_files,
                   model.mesh)

    def _read_all(self, n_cells: int, fields: ResultantFields) -> np.ndarray:
        names, files, settings = self.names, self.files, self.settings
        R = np.empty((len(names), n_cells, 8))
        frames = self.axes.frames if settings.frame == "global" else None
        if settings.frame == "global" and frames is None:
            raise ResultantsError("resultants in global axes need the element frames of every cell")
        for i in range(len(names)):
            R[i] = assemble(files.arrays(i), n_cells, fields, f" in case {names[i]!r}", self.options.tensor_order,
                            frames)
        vectors = None
        if settings.frame == "vectors":
            if settings.vectors is None or settings.vectors not in files.extra:
                raise ResultantsError(f"frame 'vectors' needs the cell array {settings.vectors!r}; found "
                                      f"{', '.join(map(repr, sorted(files.extra))) or 'no cell arrays'}")
            vectors = files.extra[settings.vectors]
        return convert(R, settings, self.axes, vectors)

    def read_cells(self, cells: slice | np.ndarray) -> np.ndarray:
        """(n_steps, ncell, 8) resultants of a cell slice or of increasing cell ids."""
        if self._data is not None:
            return self._data[:, cells]
        try:
            return self.reader.read(cells, self.axes.take(cells))
        except InputError as exc:
            raise exc.within(self.files.label) from None

    def read(self, start: int, stop: int) -> np.ndarray:
        """(n_steps, stop − start, 8) resultants of cells start … stop − 1."""
        return self.read_cells(slice(start, stop))

    def block_steps(self, start: int, stop: int) -> np.ndarray | None:
        """What a block task needs besides :attr:`reader`: the steps, when there is no file to open by path."""
        return None if self.reader is not None else self._data[:, start:stop]


def read_resultants(path_or_paths, n_cells: int, fields: ResultantFields = ResultantFields(),
                    settings: ResultantSettings = ResultantSettings(), *, cases: Sequence[str] | None = None,
                    material_angle_deg: np.ndarray | None = None, frames: Sequence[np.ndarray] | None = None,
                    allow_nonfinite: bool = False, mesh=None,
                    notes: list | None = None) -> tuple[tuple[str, ...], np.ndarray]:
    """Read every cell of the load cases' resultants, in definition units and the element frame.

    Parameters
    ----------
    path_or_paths : path or list of paths
        One file (XDMF series, HDF5, or a mesh file with suffixed or plain
        arrays) or a list of mesh files, one case each; see :mod:`bridge.recover.files`.
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
    allow_nonfinite : bool
        Keep NaN/inf values (flag them with :func:`nonfinite_mask`) instead of raising.
    mesh : ShellMesh, optional
        The model mesh: a file with its own cells is mapped onto its cell order or refused.
    notes : list, optional
        Receives one-line notes: cells mapped, or (HDF5) order assumed.

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
    source = ResultantSource(path_or_paths, n_cells, fields, settings,
                             CellAxes(material_angle_deg, None if frames is None else tuple(frames)), mesh=mesh)
    if notes is not None:
        notes.extend(source.notes)
    names = source.names
    try:
        pick = list(range(len(names)))
        if cases is not None:
            unknown = [c for c in cases if c not in names]
            if unknown:
                raise ResultantsError(f"unknown load case(s) {unknown}; the file has {list(names)}")
            pick = [names.index(c) for c in cases]
        R = source.read_cells(slice(None))[pick]
        if not allow_nonfinite:
            bad = nonfinite_mask(R)
            if bad.any():
                rows = [f"{names[pick[k]]!r} (cells {_few(np.flatnonzero(bad[k]))})"
                        for k in np.flatnonzero(bad.any(axis=1))]
                raise ResultantsError(f"NaN or infinite resultants in case(s) {'; '.join(rows)}; fix the "
                                      "solver output or allow non-finite values to skip those cells")
    except InputError as exc:
        raise exc.within(source.files.label) from None
    return tuple(names[i] for i in pick), R
