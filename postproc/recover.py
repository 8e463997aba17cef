"""Recovery over cells × cases into an envelope, in blocks.

The envelope keeps, for every cell and ply, the lowest margin of safety over
cases, through-thickness points and criteria, with the strength ratio there and
the governing case, point, criterion and mode. Margins rather than strength
ratios govern, so that limit and ultimate cases (different factors of safety)
compare correctly; with one factor of safety the two orderings agree.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from shells.criteria import CRITERIA, code
from shells.errors import ResultantsError
from shells.recovery import recover_block
from shells.recovery_args import NO_HELD, NO_SHEAR, BlockInputs, Envelope, PlyStates, Selection, per_cell
from shells.recovery_tables import ROUNDOFF, SectionTables

__all__ = ["CaseParams", "Envelope", "cell_summary", "recover_cells", "recover_into", "selection"]


class CaseParams:
    """Allowables per case: the property vectors of each environment and the environment of each case.

    Parameters
    ----------
    groups : int (ncase,)
        Index into ``tables`` of each case's allowables.
    tables : sequence of (params, face_params)
        ``SectionArrays.params`` (nrows, NPARAM) and ``face_params`` (nface, NPARAM) of each environment.
    """

    def __init__(self, groups: np.ndarray, tables: Sequence[tuple[np.ndarray, np.ndarray]]):
        self.groups = np.asarray(groups, dtype=np.int64)
        self.tables = tuple(tables)

    def runs(self, start: int = 0) -> list[tuple[int, int, int]]:
        """(first case, stop, group) of each run of consecutive cases with the same allowables."""
        out: list[tuple[int, int, int]] = []
        for j, g in enumerate(self.groups):
            if out and out[-1][2] == g:
                out[-1] = (out[-1][0], j + 1, int(g))
            else:
                out.append((j, j + 1, int(g)))
        return out

    def arrays(self, tables: SectionTables, group: int):
        """The kernel tables with the allowables of ``group``."""
        params, face = self.tables[group]
        return tables.arrays._replace(params=params, face_params=face)


def case_runs(case_params: CaseParams | None, ncase: int, tables: SectionTables):
    """(start, stop, SectionArrays) of the runs of cases sharing allowables (one run without ``case_params``)."""
    if case_params is None:
        return [(0, ncase, tables.arrays)]
    return [(a, b, case_params.arrays(tables, g)) for a, b, g in case_params.runs()]




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


def selection(criteria: Sequence[type]) -> Selection:
    """Registry codes and point masks of the chosen point-level criteria and codes of the face-level ones."""
    point = [c for c in criteria if c.level == "point"]
    codes = np.array([code(c.name) for c in point], dtype=np.int64)
    masks = np.zeros((len(point), 3), dtype=np.bool_)
    for s, c in enumerate(point):
        masks[s, list(c.points)] = True
    faces = np.array([code(c.name) for c in criteria if c.level == "face"], dtype=np.int64)
    return Selection(codes, masks, faces)


def _shear_field(shear: np.ndarray | None, ncase: int, ncell: int, max_plies: int) -> np.ndarray:
    if shear is None:
        return NO_SHEAR
    shear = np.ascontiguousarray(shear, dtype=np.float64)
    if shear.shape != (ncase, ncell, max_plies, 3, 2):
        raise ResultantsError(f"transverse shear field of shape {shear.shape}; expected "
                              f"({ncase}, {ncell}, {max_plies}, 3, 2) (cases, cells, plies, points, xz/yz)")
    # Round-off (free faces): below ROUNDOFF of the largest |τ| of the same cell and case (docs/criteria.md).
    scale = np.abs(np.nan_to_num(shear)).max(axis=(2, 3, 4), keepdims=True) if shear.size else 0.0
    return np.ascontiguousarray(np.where(np.abs(shear) <= ROUNDOFF * scale, 0.0, shear))


def recover_into(env: Envelope, criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray,
                 phi_deg: np.ndarray, R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray,
                 fos: np.ndarray, skip: np.ndarray | None = None, case0: int = 0,
                 store: PlyStates | None = None, shear: np.ndarray | None = None, held: np.ndarray | None = None,
                 held_pressure: np.ndarray | None = None, held_shear: np.ndarray | None = None,
                 case_params: CaseParams | None = None) -> None:
    """Recover one block of cells × cases and merge it into ``env`` (rows of the same cells).

    Parameters
    ----------
    env : Envelope
        Envelope rows of the block's cells (``Envelope.rows``), updated in place; its ``case_margin``
        has a column for every case of the run (at least ``case0 + ncase``).
    criteria : sequence of criterion classes
    tables : SectionTables
    cell_sec : int (ncell,), phi_deg : float (ncell,)
        Section id and material angle (degrees) of each cell.
    R : float (ncase, ncell, 8)
        Resultants in the element frame.
    dT : float (ncase, ncell); dM, pres : float (ncase,) or (ncase, ncell); fos : float (ncase,)
        Temperature change, moisture change, pressure (per case, or per case and cell) and factor of safety.
    skip : bool (ncase, ncell), optional
        Cell-cases not to recover (non-finite input).
    case0 : int
        Index of the block's first case in the run.
    store : PlyStates, optional
        Arrays to fill with every ply's stresses and strains.
    shear : float (ncase, ncell, maxply, 3, 2), optional
        Precomputed transverse shear (τxz, τyz) in laminate axes, replacing F·(Qx, Qy)
        (see :class:`shells.recovery_args.BlockInputs`).
    held : float (ncase, ncell, 8), optional
        Resultants of held cases (element frame): part of the fixed state, not scaled by R.
    held_pressure : float (ncase,) or (ncase, ncell), optional
        Lateral pressure of the held part.
    held_shear : float (ncase, ncell, maxply, 3, 2), optional
        Transverse shear field of the held part; required with ``shear`` when ``held`` is given.
    case_params : CaseParams, optional
        Allowables per case (environments); default the tables' own.
    """
    block = block_inputs(tables, cell_sec, phi_deg, R, dT, dM, pres, fos, skip, case0, shear, held, held_pressure,
                         held_shear)
    ncase = block.resultants.shape[0]
    sel = selection(criteria)
    out = PlyStates.none() if store is None else store
    for a, b, arrays in case_runs(case_params, ncase, tables):
        recover_block(sel, arrays, case_slice(block, a, b), env, out if store is None else PlyStates(
            *(x[a:b] for x in store)))


def block_inputs(tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray, R: np.ndarray, dT: np.ndarray,
                 dM=None, pres=None, fos=None, skip: np.ndarray | None = None, case0: int = 0,
                 shear: np.ndarray | None = None, held: np.ndarray | None = None, held_pressure=None,
                 held_shear: np.ndarray | None = None) -> BlockInputs:
    """The kernels' :class:`BlockInputs` of one block (arguments as :func:`recover_into`; ``fos`` default 1)."""
    ncase, ncell = R.shape[:2]
    f64 = lambda a: np.ascontiguousarray(a, dtype=np.float64)  # noqa: E731
    skip = np.zeros((ncase, ncell), np.bool_) if skip is None else np.ascontiguousarray(skip, dtype=np.bool_)
    phi = np.radians(np.asarray(phi_deg, dtype=np.float64))
    if held is not None and shear is not None and held_shear is None:
        raise ResultantsError("a transverse shear field for the loads needs one for the held cases too")
    held_R = NO_HELD if held is None else f64(np.nan_to_num(held))
    if held is not None and held_R.shape != R.shape:
        raise ResultantsError(f"held resultants of shape {held_R.shape}; expected {R.shape}")
    return BlockInputs(f64(R), f64(dT), per_cell(dM, ncase, ncell), per_cell(pres, ncase, ncell),
                       f64(np.ones(ncase) if fos is None else fos), skip,
                       np.ascontiguousarray(cell_sec, dtype=np.int64), np.cos(phi), np.sin(phi),
                       _shear_field(shear, ncase, ncell, tables.max_plies), held_R,
                       per_cell(held_pressure, ncase, ncell),
                       _shear_field(held_shear, ncase, ncell, tables.max_plies) if held is not None else NO_SHEAR,
                       int(case0))


def case_slice(block: BlockInputs, a: int, b: int) -> BlockInputs:
    """The cases a … b − 1 of a block's inputs (views; the global index of case a is ``case0 + a``)."""
    if a == 0 and b == block.resultants.shape[0]:
        return block
    cut = lambda x: x if x.size == 0 else x[a:b]  # noqa: E731
    return block._replace(resultants=block.resultants[a:b], delta_T=block.delta_T[a:b], delta_M=block.delta_M[a:b],
                          pressure=block.pressure[a:b], fos=block.fos[a:b], skip=block.skip[a:b],
                          shear=cut(block.shear), held_resultants=cut(block.held_resultants),
                          held_pressure=block.held_pressure[a:b], held_shear=cut(block.held_shear),
                          case0=block.case0 + a)


def worst_over_rotations(env: Envelope, rotations: Sequence[float], run) -> np.ndarray | None:
    """Run ``run(rotation)`` (which merges into ``env``) for each rotation; the governing rotation per ply.

    The first rotation is the nominal one (0): a later rotation governs a ply only where it lowers the margin.
    Returns (ncell, maxply) rotations in degrees, or None for the nominal orientation alone.
    """
    rot = None if len(rotations) == 1 else np.zeros(env.margin.shape)
    for k, r in enumerate(rotations):
        before = env.margin.copy() if k else None
        run(float(r))
        if k:
            rot[env.margin < before] = r
    return rot


def recover_cells(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray,
                  R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray, fos: np.ndarray,
                  store_plies: bool = False, shear: np.ndarray | None = None, held: np.ndarray | None = None,
                  held_pressure: np.ndarray | None = None,
                  held_shear: np.ndarray | None = None, case_params: CaseParams | None = None,
                  rotations: Sequence[float] = (0.0,), shear_of=None) -> tuple[dict, dict, dict | None]:
    """Envelope, cell summary and (optionally) ply states of one block of cells over all cases.

    Cell-cases with non-finite resultants are skipped: the cell is ``flagged``
    and its envelope covers the remaining cases (NaN when none remain).

    Parameters
    ----------
    shear, held, held_pressure, held_shear, case_params : optional
        Precomputed transverse shear, the held part and the allowables per case (see :func:`recover_into`).
    rotations : sequence of float
        Turns of the laminate (degrees, added to the material angle), nominal first: ``(0, −δ, +δ)`` checks a
        misalignment tolerance δ and keeps the worst (the envelope and cells then carry ``misalignment``, the
        governing turn). Ply states are those of the nominal orientation.
    shear_of : callable(rotation) -> (shear, held_shear), optional
        The transverse shear fields of a turned laminate (field method); default ``shear``, ``held_shear``.

    Returns
    -------
    envelope : dict of (ncell, maxply) arrays (see :class:`Envelope`)
    cells : dict of (ncell,) arrays (see :func:`cell_summary`, plus ``flagged``), and
        ``case_margin`` (ncell, ncase), ``criterion_margin`` (ncell, len(CRITERIA)): lowest margin per
        case and per criterion (inf where nothing applies, NaN for skipped cell-cases)
    plies : dict or None
        ``stress``, ``strain`` (ncase, ncell, maxply, 3, 3) and ``transverse_shear`` (…, 2).
    """
    R, held, skip = finite_loads(R, held)
    ncase, ncell = R.shape[:2]
    env = Envelope.empty(ncell, tables.max_plies, ncase, len(CRITERIA))
    plies = PlyStates.allocate(ncase, ncell, tables.max_plies) if store_plies else None
    phi = np.asarray(phi_deg, dtype=np.float64)

    def run(rot: float) -> None:
        sh, hsh = (shear, held_shear) if shear_of is None or rot == 0.0 else shear_of(rot)
        recover_into(env, criteria, tables, cell_sec, phi + rot, R, dT, dM, pres, fos, skip, 0,
                     plies if rot == 0.0 else None, sh, held, held_pressure, hsh, case_params)

    rot = worst_over_rotations(env, rotations, run)
    done = env.finish(tables.nply[cell_sec], skip.all(axis=0))
    cells = cell_summary(done)
    cells["flagged"] = skip.any(axis=0)
    cells["case_margin"] = np.where(skip.T, np.nan, done.case_margin)
    cells["criterion_margin"] = done.criterion_margin
    envelope = done.per_ply()
    if rot is not None:
        envelope["misalignment"] = np.where(np.isnan(done.margin), np.nan, rot)
        ply = np.maximum(cells["critical_ply"] - 1, 0)
        cells["misalignment"] = np.where(cells["critical_ply"] > 0, envelope["misalignment"][np.arange(ncell), ply],
                                         np.nan)
    out = None
    if plies is not None:
        out = {"stress": plies.stress, "strain": plies.strain, "transverse_shear": plies.shear}
        for a in out.values():
            a[skip] = np.nan
    return envelope, cells, out


def finite_loads(R: np.ndarray, held: np.ndarray | None) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """(R, held, skip): cell-cases with non-finite resultants (scaled or held) skipped and their R set to 0."""
    R = np.asarray(R, dtype=np.float64)
    skip = ~np.isfinite(R).all(axis=-1)
    if held is not None:
        held = np.asarray(held, dtype=np.float64)
        skip |= ~np.isfinite(held).all(axis=-1)
    return np.where(skip[..., None], 0.0, R), held, skip
