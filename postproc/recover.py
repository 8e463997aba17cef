"""Recovery over cells × cases into an envelope, in blocks.

The envelope keeps, for every cell and ply, the lowest margin of safety over
cases, through-thickness points and criteria, with the strength ratio there and
the governing case, point, criterion and mode. Margins rather than strength
ratios govern, so that limit and ultimate cases (different factors of safety)
compare correctly; with one factor of safety the two orderings agree.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from shells.criteria import CRITERIA, code
from shells.recovery import recover_block
from shells.recovery_tables import SectionTables


@dataclass(frozen=True)
class Envelope:
    """Per cell and ply (NaN / −1 past a cell's ply count or where nothing was computed).

    Attributes
    ----------
    margin, strength_ratio : float64 (ncell, maxply)
    case : int32 (ncell, maxply)
        Governing case index (into the run's case list).
    point : int8
        0 bottom, 1 middle, 2 top.
    criterion : int8
        Registry code (``shells.criteria.CRITERIA`` index).
    mode : int8
        Index into the criterion's modes.
    """

    margin: np.ndarray
    strength_ratio: np.ndarray
    case: np.ndarray
    point: np.ndarray
    criterion: np.ndarray
    mode: np.ndarray

    @classmethod
    def empty(cls, n_cells: int, max_plies: int) -> "Envelope":
        shape = (n_cells, max_plies)
        return cls(np.full(shape, np.inf), np.full(shape, np.inf), np.full(shape, -1, np.int32),
                   np.full(shape, -1, np.int8), np.full(shape, -1, np.int8), np.full(shape, -1, np.int8))

    def rows(self, start: int, stop: int) -> "Envelope":
        """A view of cells start … stop − 1 (updates write through)."""
        return Envelope(*(getattr(self, f)[start:stop] for f in self.__dataclass_fields__))

    def finish(self, nply_of_cell: np.ndarray, bad_cell: np.ndarray | None = None) -> "Envelope":
        """Mark plies past each cell's count (and cells not computed) as NaN / −1."""
        out = Envelope(*(getattr(self, f).copy() for f in self.__dataclass_fields__))
        past = np.arange(out.margin.shape[1])[None, :] >= nply_of_cell[:, None]
        if bad_cell is not None:
            past |= bad_cell[:, None]
        for name in ("margin", "strength_ratio"):
            getattr(out, name)[past] = np.nan
        for name in ("case", "point", "criterion", "mode"):
            getattr(out, name)[past] = -1
        return out


def cell_summary(env: Envelope) -> dict[str, np.ndarray]:
    """Per cell: minimum margin and its (1-based) critical ply, strength ratio, case, criterion, mode."""
    ms = np.where(np.isnan(env.margin), np.inf, env.margin)
    ply = np.argmin(ms, axis=1)
    rows = np.arange(ms.shape[0])
    valid = np.any(~np.isnan(env.margin), axis=1)
    out = {
        "min_margin": np.where(valid, env.margin[rows, ply], np.nan),
        "critical_ply": np.where(valid, ply + 1, 0).astype(np.int32),
    }
    for name in ("strength_ratio", "case", "point", "criterion", "mode"):
        arr = getattr(env, name)[rows, ply]
        out[name] = np.where(valid, arr, np.nan if arr.dtype.kind == "f" else -1).astype(arr.dtype)
    return out


def _codes(criteria: Sequence[type]) -> tuple[np.ndarray, np.ndarray]:
    """Registry codes and point masks of the chosen criteria, for the kernel."""
    codes = np.array([code(c.name) for c in criteria], dtype=np.int64)
    masks = np.zeros((len(criteria), 3), dtype=np.bool_)
    for s, c in enumerate(criteria):
        masks[s, list(c.points)] = True
    return codes, masks


def recover_into(env: Envelope, criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray,
                 phi_deg: np.ndarray, R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray,
                 fos: np.ndarray, skip: np.ndarray | None = None, case0: int = 0,
                 store: dict[str, np.ndarray] | None = None, case_ms: np.ndarray | None = None,
                 crit_ms: np.ndarray | None = None) -> None:
    """Recover one block of cells × cases and merge it into ``env`` (rows of the same cells).

    Parameters
    ----------
    env : Envelope
        Envelope rows of the block's cells (``Envelope.rows``), updated in place.
    criteria : sequence of criterion classes
    tables : SectionTables
    cell_sec : int (ncell,), phi_deg : float (ncell,)
        Section id and material angle (degrees) of each cell.
    R : float (ncase, ncell, 8)
        Resultants in the element frame.
    dT : float (ncase, ncell); dM, pres, fos : float (ncase,)
        Temperature change, moisture change, pressure and factor of safety of each case.
    skip : bool (ncase, ncell), optional
        Cell-cases not to recover (non-finite input).
    case0 : int
        Index of the block's first case in the run.
    store : dict, optional
        Arrays ``stress``, ``strain`` (ncase, ncell, maxply, 3, 3) and ``shear`` (…, 2) to fill.
    case_ms, crit_ms : float64 (ncell, case0 + ncase), (ncell, len(CRITERIA)), optional
        Lowest margin per cell and case / per cell and criterion, updated in place.
    """
    ncase, ncell = R.shape[:2]
    f64 = lambda a: np.ascontiguousarray(a, dtype=np.float64)  # noqa: E731
    R, dT = f64(R), f64(dT)
    skip = np.zeros((ncase, ncell), np.bool_) if skip is None else np.ascontiguousarray(skip, dtype=np.bool_)
    phi = np.radians(np.asarray(phi_deg, dtype=np.float64))
    if store is None:
        empty = np.zeros((0, 0, 0, 0, 0))
        out = (False, empty, empty, empty)
    else:
        out = (True, store["stress"], store["strain"], store["shear"])
    if case_ms is None:
        case_ms = np.full((ncell, case0 + ncase), np.inf)
    if crit_ms is None:
        crit_ms = np.full((ncell, len(CRITERIA)), np.inf)
    t = tables
    codes, masks = _codes(criteria)
    recover_block(codes, masks, R, dT, f64(dM), f64(pres), f64(fos), skip,
                  np.ascontiguousarray(cell_sec, dtype=np.int64), np.cos(phi), np.sin(phi),
                  t.compliance, t.fixed, t.first, t.nply, t.z, t.Q, t.cs, t.alpha, t.beta, t.F, t.params,
                  t.knockdown, case0, env.margin, env.strength_ratio, env.case, env.point, env.criterion,
                  env.mode, case_ms, crit_ms, *out)


def recover_cells(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray,
                  R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray, fos: np.ndarray,
                  store_plies: bool = False) -> tuple[dict, dict, dict | None]:
    """Envelope, cell summary and (optionally) ply states of one block of cells over all cases.

    Cell-cases with non-finite resultants are skipped: the cell is ``flagged``
    and its envelope covers the remaining cases (NaN when none remain).

    Returns
    -------
    envelope : dict of (ncell, maxply) arrays (see :class:`Envelope`)
    cells : dict of (ncell,) arrays (see :func:`cell_summary`, plus ``flagged``), and
        ``case_margin`` (ncell, ncase), ``criterion_margin`` (ncell, len(CRITERIA)): lowest margin per
        case and per criterion (inf where nothing applies, NaN for skipped cell-cases)
    plies : dict or None
        ``stress``, ``strain`` (ncase, ncell, maxply, 3, 3) and ``transverse_shear`` (…, 2).
    """
    R = np.asarray(R, dtype=np.float64)
    ncase, ncell = R.shape[:2]
    skip = ~np.isfinite(R).all(axis=-1)
    R = np.where(skip[..., None], 0.0, R)
    env = Envelope.empty(ncell, tables.max_plies)
    plies = None
    if store_plies:
        shape = (ncase, ncell, tables.max_plies, 3)
        plies = {"stress": np.full(shape + (3,), np.nan), "strain": np.full(shape + (3,), np.nan),
                 "shear": np.full(shape + (2,), np.nan)}
    case_ms = np.full((ncell, ncase), np.inf)
    crit_ms = np.full((ncell, len(CRITERIA)), np.inf)
    recover_into(env, criteria, tables, cell_sec, phi_deg, R, dT, dM, pres, fos, skip, 0, plies, case_ms, crit_ms)
    if plies is not None:
        for name in ("stress", "strain", "shear"):
            plies[name][skip] = np.nan
        plies["transverse_shear"] = plies.pop("shear")
    done = env.finish(tables.nply[cell_sec], skip.all(axis=0))
    cells = cell_summary(done)
    cells["flagged"] = skip.any(axis=0)
    cells["case_margin"] = np.where(skip.T, np.nan, case_ms)
    cells["criterion_margin"] = crit_ms
    return {f: getattr(done, f) for f in done.__dataclass_fields__}, cells, plies
