"""Progressive failure (ply discount) over a block of cells × cases, and envelopes restricted to chosen criteria,
modes and cases.

Both run like the recovery: per block, over the runs of cases that share allowables (environments), and over
the turns of a misalignment tolerance (the lowest factor or margin kept).
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from shells.criteria import CRITERIA
from shells.progressive import CONVEX, EVENT, progressive_block
from shells.progressive_bounds import criterion_balls, criterion_boxes
from shells.recovery_args import Envelope
from shells.recovery_tables import SectionTables
from shells.separable import family, keep_modes, separable

from postproc.recover import (CaseParams, block_inputs, case_runs, case_slice, cell_summary, finite_loads,
                              recover_into, selection, worst_over_rotations)


def fibre_modes(criteria: Sequence[type]) -> np.ndarray:
    """(ncrit, nmode) bool: whether each mode of each criterion is a fibre failure (its name starts "fibre")."""
    out = np.zeros((len(criteria), max(len(c.modes) for c in criteria)), dtype=np.bool_)
    for k, c in enumerate(criteria):
        for m, name in enumerate(c.modes):
            out[k, m] = family(name) == "fibre"
    return out


def ply_shares(tables: SectionTables) -> np.ndarray:
    """Share of each ply row in its ply's stiffness: ``tables.share`` when the tables carry it, else 1."""
    share = tables.share
    return np.ones(tables.z.shape[0]) if share is None else np.ascontiguousarray(share, dtype=np.float64)


def progressive_cells(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray,
                      R: np.ndarray, dT: np.ndarray, dM=None, held: np.ndarray | None = None,
                      retained: Sequence[float] = (0.0, 0.0), case_params: CaseParams | None = None,
                      rotations: Sequence[float] = (0.0,), sequence: bool = False):
    """First- and last-ply load factors of a block by ply discount (:mod:`shells.progressive`).

    Parameters
    ----------
    criteria : sequence of criterion classes
        The in-plane criteria that find the failures.
    R, dT, dM, held, case_params
        As :func:`postproc.recover.recover_cells` (pressure and transverse shear do not enter the discount).
    retained : (matrix, fibre)
        Fractions of the moduli a ply keeps after a matrix and after a fibre failure.
    rotations : sequence of float
        Turns of the laminate (degrees, nominal first); the lowest factors over them are kept.
    sequence : bool
        Also return the failure sequence of the nominal orientation.

    Returns
    -------
    first, last : float64 (ncell, ncase)
        Load factors on the mechanical resultants at the first and at the last ply failure (inf: none; NaN:
        cell-case skipped for non-finite input).
    seq : float64 (ncase, ncell, 2·maxply, 5) or None
        Per failure event: ply slot (0-based), criterion code (−1: the fibre check of a ply with a matrix
        failure), mode index, discount (1 matrix, 2 fibre) and load factor; NaN after the last event.
    """
    R, held, skip = finite_loads(R, held)
    ncase, ncell = R.shape[:2]
    point = [c for c in criteria if c.level == "point"]
    sel = selection(point)
    masks = sel.masks.copy()
    masks[[c.name in CONVEX for c in point], 1] = False     # faces govern a convex check (shells.progressive)
    fmodes = fibre_modes(point)
    keep = np.array([float(retained[0]), float(retained[1])])
    share = ply_shares(tables)
    first = np.full((ncell, ncase), np.inf)
    last = np.full((ncell, ncase), np.inf)
    seq = np.full((ncase, ncell, 2 * tables.max_plies, EVENT), np.nan) if sequence else np.zeros((0, 0, 0, EVENT))
    for k, rot in enumerate(rotations):
        blk = block_inputs(tables, cell_sec, np.asarray(phi_deg, dtype=np.float64) + rot, R, dT, dM, None, None,
                           skip, 0, None, held)
        f = np.full((ncell, ncase), np.inf)
        g = np.full((ncell, ncase), np.inf)
        out = seq if k == 0 else np.zeros((0, 0, 0, EVENT))
        for a, b, arrays in case_runs(case_params, ncase, tables):
            bounds = criterion_boxes(arrays.params, point), criterion_balls(arrays.params, point)
            progressive_block(arrays, share, *bounds, sel.codes, masks, fmodes, keep, case_slice(blk, a, b), f, g,
                              out if out.size == 0 else out[a:b])
        first = np.fmin(first, f) if k else f
        last = np.fmin(last, g) if k else g
    first[skip.T] = np.nan
    last[skip.T] = np.nan
    return first, last, (seq if sequence else None)


def restricted_cells(criteria: Sequence[type], modes: Sequence[str], keep_case: np.ndarray, tables: SectionTables,
                     cell_sec: np.ndarray, phi_deg: np.ndarray, R: np.ndarray, dT: np.ndarray, dM, pres, fos,
                     shear=None, held=None, held_pressure=None, held_shear=None,
                     case_params: CaseParams | None = None, rotations: Sequence[float] = (0.0,),
                     shear_of=None) -> dict[str, np.ndarray]:
    """The lowest margin per cell over the chosen criteria, modes and cases, and where it occurs.

    Parameters
    ----------
    criteria : sequence of criterion classes
    modes : sequence of str
        Mode names or families (``fibre``, ``matrix``) kept; empty: every mode. A criterion restricted to some
        of its modes must evaluate them separately (:func:`shells.separable.separable`).
    keep_case : bool (ncase,)
        Cases the envelope covers.
    others
        As :func:`postproc.recover.recover_cells`.

    Returns
    -------
    dict of (ncell,) arrays
        ``min_margin``, ``critical_ply`` (1-based; 0 where nothing was evaluated), ``strength_ratio``, ``case``,
        ``point``, ``criterion``, ``mode`` (:func:`postproc.recover.cell_summary`).
    """
    R, held, skip = finite_loads(R, held)
    ncase, ncell = R.shape[:2]
    skip = skip | ~np.asarray(keep_case, dtype=bool)[:, None]
    env = Envelope.empty(ncell, tables.max_plies, ncase, len(CRITERIA))
    phi = np.asarray(phi_deg, dtype=np.float64)
    groups = []
    for c in criteria:
        chosen = tuple(c.modes) if not modes else tuple(m for m in c.modes if m in modes or family(m) in modes)
        if len(chosen) == len(c.modes) or not separable(c.name):
            groups.append(((c,), None))
        else:
            groups.append(((c,), chosen))

    def run(rot: float) -> None:
        sh, hsh = (shear, held_shear) if shear_of is None or rot == 0.0 else shear_of(rot)
        for crit, chosen in groups:
            params = case_params
            if chosen is not None:
                base = case_params or CaseParams(np.zeros(ncase, np.int64), [(tables.params, tables.face_params)])
                params = CaseParams(base.groups, [(keep_modes(p, crit[0].name, chosen), f) for p, f in base.tables])
            recover_into(env, crit, tables, cell_sec, phi + rot, R, dT, dM, pres, fos, skip, 0, None, sh, held,
                         held_pressure, hsh, params)

    worst_over_rotations(env, rotations, run)
    return cell_summary(env.finish(tables.nply[cell_sec], skip.all(axis=0)))
