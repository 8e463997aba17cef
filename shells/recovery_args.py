"""The recovery kernel's arguments, bundled as named tuples of arrays.

Declared once here; :mod:`postproc.recover` builds them and
:func:`shells.recovery.recover_block` reads them by name (numba compiles named
tuples of arrays and caches the kernel across processes). Every array is
C-contiguous and of the dtype stated; optional arrays are zero-size when
unused, so the kernel's signature never changes.

Conventions: docs/conventions.md. Cells are in the block's order, cases in the
block's order (global case index = ``case0 + j``), plies bottom to top, points
bottom, middle, top.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np


class Selection(NamedTuple):
    """The chosen criteria.

    Attributes
    ----------
    codes : int64 (ncrit,)
        Registry codes (``shells.criteria.code``).
    masks : bool (ncrit, 3)
        Whether each criterion applies at the bottom, middle and top points.
    face_codes : int64 (nface_crit,)
        Registry codes of the chosen face-level criteria (``Criterion.level == "face"``), evaluated once per
        sandwich face on its mean stress; not in ``codes``.
    """

    codes: np.ndarray
    masks: np.ndarray
    face_codes: np.ndarray


class SectionArrays(NamedTuple):
    """Section and ply tables (see :class:`shells.recovery_tables.SectionTables`).

    Attributes
    ----------
    compliance : float64 (nsec, 6, 6)
        [[A, B], [B, D]]⁻¹ in laminate axes.
    fixed : float64 (nsec, 4, 3)
        N_T, M_T (per unit temperature rise), N_H, M_H (per unit moisture change).
    first, nply : int64 (nsec,)
        First ply row and ply count of each section.
    z : float64 (nrows, 3)
        z of the bottom, middle and top of every ply.
    Q : float64 (nrows, 4)
        Q11, Q12, Q22, Q66 in material axes.
    cs : float64 (nrows, 2)
        cos θ, sin θ of the ply angle.
    alpha, beta : float64 (nrows, 2)
        Expansion along 1 and 2 per unit temperature / moisture.
    F : float64 (nrows, 3, 2, 2)
        (τxz, τyz) per unit (Qx, Qy) at the three points, laminate axes.
    params : float64 (nrows, NPARAM)
        Criterion property vectors, allowables already multiplied by the ply's knockdown
        (:func:`shells.params.knocked_down`).
    face_first, face_count : int64 (nsec,)
        First face row and number of sandwich faces of each section.
    face_rows : int64 (nface, 2)
        First ply row and ply count of each face (its plies are consecutive).
    face_params : float64 (nface, NPARAM)
        Property vector of each face (``shells.section.Section.face_params``).
    """

    compliance: np.ndarray
    fixed: np.ndarray
    first: np.ndarray
    nply: np.ndarray
    z: np.ndarray
    Q: np.ndarray
    cs: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    F: np.ndarray
    params: np.ndarray
    face_first: np.ndarray
    face_count: np.ndarray
    face_rows: np.ndarray
    face_params: np.ndarray


class BlockInputs(NamedTuple):
    """What varies per block of cells × cases.

    Attributes
    ----------
    resultants : float64 (ncase, ncell, 8)
        Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy in the element frame.
    delta_T : float64 (ncase, ncell)
        Temperature change per case and cell.
    delta_M, pressure : float64 (ncase, ncell)
        Moisture change and lateral pressure (σ3 = −pressure) of each case and cell.
    fos : float64 (ncase,)
        Factor of safety of each case.
    skip : bool (ncase, ncell)
        Cell-cases not to recover (non-finite input).
    section : int64 (ncell,)
        Section id of each cell (row of the section tables).
    cos_phi, sin_phi : float64 (ncell,)
        cos φ, sin φ of the material angle (element x → laminate x).
    shear : float64 (ncase, ncell, maxply, 3, 2), or zero-size
        Optional precomputed transverse shear (τxz, τyz) in LAMINATE axes at the bottom, middle and
        top of every ply (force/length²). When given (non-zero size) it replaces F·(Qx, Qy) in the
        kernel: the hook of ``[analysis] transverse_shear = "field"`` (transverse shear from the
        gradients of the resultant field). Qx, Qy of ``resultants`` are then not used for stresses.
        Zero-size (the normal path): τ = F·(Qx, Qy).
    held_resultants : float64 (ncase, ncell, 8), or zero-size
        Resultants of held cases (element frame), part of the FIXED state with the thermal and moisture
        resultants: they are not scaled by the strength ratio. Zero-size when no case holds any.
    held_pressure : float64 (ncase, ncell)
        Lateral pressure of the held part (σ3 = −held_pressure, fixed); zeros when none.
    held_shear : float64 (ncase, ncell, maxply, 3, 2), or zero-size
        As ``shear``, for the held part: given exactly when ``shear`` is given and there are held resultants.
    case0 : int
        Global index of the block's first case.
    """

    resultants: np.ndarray
    delta_T: np.ndarray
    delta_M: np.ndarray
    pressure: np.ndarray
    fos: np.ndarray
    skip: np.ndarray
    section: np.ndarray
    cos_phi: np.ndarray
    sin_phi: np.ndarray
    shear: np.ndarray
    held_resultants: np.ndarray
    held_pressure: np.ndarray
    held_shear: np.ndarray
    case0: int


def per_cell(values, ncase: int, ncell: int) -> np.ndarray:
    """A per-case (ncase,) or per-case-and-cell (ncase, ncell) value (None: zeros) as a C-contiguous float64
    (ncase, ncell) array: ``BlockInputs.delta_M``, ``pressure``, ``held_pressure``."""
    a = np.zeros(ncase) if values is None else np.asarray(values, dtype=np.float64)
    if a.ndim == 1:
        a = a[:, None]
    return np.ascontiguousarray(np.broadcast_to(a, (ncase, ncell)), dtype=np.float64)


#: The zero-size ``BlockInputs.shear`` / ``held_shear`` of the normal path.
NO_SHEAR = np.zeros((0, 0, 0, 3, 2))
#: The zero-size ``BlockInputs.held_resultants`` when nothing is held.
NO_HELD = np.zeros((0, 0, 8))


class Envelope(NamedTuple):
    """The lowest margin per cell and ply, with where it occurs (updated in place by the kernel).

    NaN / −1 past a cell's ply count or where nothing was computed (after :meth:`finish`).

    Attributes
    ----------
    margin, strength_ratio : float64 (ncell, maxply)
    case : int32 (ncell, maxply)
        Governing case index (into the run's case list).
    point : int8 (ncell, maxply)
        0 bottom, 1 middle, 2 top.
    criterion : int8 (ncell, maxply)
        Registry code (``shells.criteria.CRITERIA`` index).
    mode : int8 (ncell, maxply)
        Index into the criterion's modes.
    case_margin : float64 (ncell, ncase_total)
        Lowest margin of each cell per case (global case index).
    criterion_margin : float64 (ncell, ncriteria_registered)
        Lowest margin of each cell per criterion code.
    """

    margin: np.ndarray
    strength_ratio: np.ndarray
    case: np.ndarray
    point: np.ndarray
    criterion: np.ndarray
    mode: np.ndarray
    case_margin: np.ndarray
    criterion_margin: np.ndarray

    @classmethod
    def empty(cls, n_cells: int, max_plies: int, n_cases: int, n_criteria: int) -> "Envelope":
        shape = (n_cells, max_plies)
        return cls(np.full(shape, np.inf), np.full(shape, np.inf), np.full(shape, -1, np.int32),
                   np.full(shape, -1, np.int8), np.full(shape, -1, np.int8), np.full(shape, -1, np.int8),
                   np.full((n_cells, n_cases), np.inf), np.full((n_cells, n_criteria), np.inf))

    def rows(self, start: int, stop: int) -> "Envelope":
        """A view of cells start … stop − 1 (updates write through)."""
        return Envelope(*(a[start:stop] for a in self))

    def finish(self, nply_of_cell: np.ndarray, bad_cell: np.ndarray | None = None) -> "Envelope":
        """Plies past each cell's count (and cells not computed) marked NaN / −1, in a copy of the per-ply arrays.

        ``case_margin`` and ``criterion_margin`` are shared with ``self``, not copied.
        """
        out = self._replace(**{name: getattr(self, name).copy() for name in PER_PLY})
        past = np.arange(out.margin.shape[1])[None, :] >= np.asarray(nply_of_cell)[:, None]
        if bad_cell is not None:
            past |= np.asarray(bad_cell)[:, None]
        for a in (out.margin, out.strength_ratio):
            a[past] = np.nan
        for a in (out.case, out.point, out.criterion, out.mode):
            a[past] = -1
        return out

    def per_ply(self) -> dict[str, np.ndarray]:
        """The (ncell, maxply) arrays by name."""
        return {name: getattr(self, name) for name in PER_PLY}


#: Envelope fields of shape (ncell, maxply).
PER_PLY = ("margin", "strength_ratio", "case", "point", "criterion", "mode")


class PlyStates(NamedTuple):
    """Optional output: every ply's stresses and strains (zero-size when not stored).

    Attributes
    ----------
    stress : float64 (ncase, ncell, maxply, 3, 3)
        Total (σ1, σ2, τ12), material axes.
    strain : float64 (ncase, ncell, maxply, 3, 3)
        Total (ε1, ε2, γ12), material axes.
    shear : float64 (ncase, ncell, maxply, 3, 2)
        (τ13, τ23), material axes.
    """

    stress: np.ndarray
    strain: np.ndarray
    shear: np.ndarray

    @classmethod
    def none(cls) -> "PlyStates":
        empty = np.zeros((0, 0, 0, 0, 0))
        return cls(empty, empty, empty)

    @classmethod
    def allocate(cls, n_cases: int, n_cells: int, max_plies: int) -> "PlyStates":
        shape = (n_cases, n_cells, max_plies, 3)
        return cls(np.full(shape + (3,), np.nan), np.full(shape + (3,), np.nan), np.full(shape + (2,), np.nan))
