"""Full through-thickness states of a few cells (the hot spots), for plots and the report.

The envelope keeps only the governing values; for the cells a reviewer will
look at, the store also keeps every ply's mechanical and fixed stress state at
the three points of every case, and each chosen criterion's strength ratio there.
Face-level criteria (wrinkling, dimpling) are evaluated on each sandwich face's
mean stress, as in the kernel, and their ratio is shown at every point of the
face's plies.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from shells.criteria import evaluate
from shells.recovery_reference import ply_states
from shells.recovery_tables import SectionTables
from shells.rotation import stress_rotation


def face_states(tables: SectionTables, cell_sec: np.ndarray, ref: dict) -> tuple[np.ndarray, ...]:
    """Mean stress of every sandwich face of the given cells, from reference ply states.

    Returns
    -------
    mech, fixed : float64 (ncell, ncase, maxface, 3, 6)
        The face's mean (σx, σy, τxy) in laminate axes in slots 0-2 (the same at the three points), zero elsewhere.
    fidx : int64 (ncell, maxface)
        Row of ``tables.face_params`` of each face, −1 past a cell's face count.
    """
    n, ncase = len(cell_sec), ref["mech"].shape[0]
    maxface = int(max(1, tables.face_count.max(initial=0)))
    out = [np.zeros((n, ncase, maxface, 3, 6)) for _ in range(2)]
    fidx = np.full((n, maxface), -1, dtype=np.int64)
    for i, s in enumerate(cell_sec):
        for g in range(tables.face_count[s]):
            f = tables.face_first[s] + g
            fidx[i, g] = f
            row0, count = tables.face_rows[f]
            rows = np.arange(row0, row0 + count)
            local = rows - tables.first[s]
            w = tables.z[rows, 2] - tables.z[rows, 0]
            theta = np.degrees(np.arctan2(tables.cs[rows, 1], tables.cs[rows, 0]))
            T = stress_rotation(theta)                                        # (count, 3, 3): material → laminate
            for dst, key in zip(out, ("mech", "fixed")):
                mid = ref[key][:, i, local, 1, :3]                            # (ncase, count, 3)
                lam = np.einsum("kab,jkb->jka", T, mid)
                dst[i, :, g, :, :3] = (np.einsum("k,jka->ja", w, lam) / w.sum())[:, None, :]
    return out[0], out[1], fidx


def _by_cases(criterion, sm, sf, idx, params, face, case_params) -> np.ndarray:
    """``evaluate`` over (ncell, ncase, …) states with each case's allowables (``face``: the face tables)."""
    if case_params is None:
        return evaluate(criterion, sm, sf, idx, params)[0]
    out = np.empty(sm.shape[:4])
    for a, b, g in case_params.runs():
        ply, faces = case_params.tables[g]
        out[:, a:b] = evaluate(criterion, sm[:, a:b], sf[:, a:b], idx, faces if face else ply)[0]
    return out


def cell_states(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray,
                R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray,
                shear: np.ndarray | None = None, held: np.ndarray | None = None,
                held_pressure: np.ndarray | None = None,
                held_shear: np.ndarray | None = None, case_params=None) -> dict[str, np.ndarray]:
    """States and strength ratios of the given cells (``shear``, ``held``, ``held_pressure``, ``held_shear``: see
    :func:`shells.recovery_reference.ply_states`; the held part is fixed, not scaled; ``case_params``: the
    allowables of each case's environment, :class:`postproc.recover.CaseParams`).

    Returns
    -------
    dict
        ``mech``, ``fixed`` (ncase, ncell, maxply, 3, 6) material-axis states (σ1, σ2, τ12, τ13, τ23, σ3);
        ``strain`` (ncase, ncell, maxply, 3, 3); ``z`` (ncell, maxply, 3);
        ``ratio`` (ncrit, ncase, ncell, maxply, 3) strength ratios (NaN past a cell's ply count).
    """
    ref = ply_states(tables, cell_sec, phi_deg, R, dT, dM, pres, shear, held, held_pressure, held_shear)
    return {"mech": ref["mech"], "fixed": ref["fixed"], "strain": ref["strain"], "z": ref["z"],
            "ratio": ratios_of_states(criteria, tables, cell_sec, ref, case_params)}


def ratios_of_states(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray,
                     ref: dict, case_params=None) -> np.ndarray:
    """Strength ratios (ncrit, ncase, ncell, maxply, 3) of point states ``ref["mech"]``, ``ref["fixed"]``
    (ncase, ncell, maxply, 3, 6), as the run computes them: point criteria at every ply point, face-level
    criteria on each sandwich face's mean stress (:func:`face_states`), shown at every point of the face;
    ``case_params``: the allowables of each case's environment (:class:`postproc.recover.CaseParams`)."""
    n, mp = len(cell_sec), tables.max_plies
    pidx = np.full((n, mp), -1, dtype=np.int64)
    for i, s in enumerate(cell_sec):
        pidx[i, :tables.nply[s]] = tables.first[s] + np.arange(tables.nply[s])
    mech = np.ascontiguousarray(np.nan_to_num(ref["mech"]).transpose(1, 0, 2, 3, 4))
    fixed = np.ascontiguousarray(np.nan_to_num(ref["fixed"]).transpose(1, 0, 2, 3, 4))
    faces = None
    ratios = []
    for c in criteria:
        if c.level == "point":
            ratios.append(_by_cases(c, mech, fixed, pidx, tables.params, False, case_params).transpose(1, 0, 2, 3))
            continue
        if faces is None:
            faces = face_states(tables, cell_sec, ref)
        fm, ff, fidx = faces
        sr = (_by_cases(c, fm, ff, fidx, tables.face_params, True, case_params) if fidx.max() >= 0
              else np.zeros(fm.shape[:4]))
        out = np.where(pidx[:, None, :, None] >= 0, np.inf, np.nan) * np.ones((n, mech.shape[1], mp, 3))
        for i, s in enumerate(cell_sec):
            for g in range(tables.face_count[s]):
                row0, count = tables.face_rows[tables.face_first[s] + g]
                local = np.arange(row0, row0 + count) - tables.first[s]
                out[i, :, local] = sr[i, :, g][:, None, :].transpose(1, 0, 2)
        ratios.append(out.transpose(1, 0, 2, 3))
    return np.stack(ratios)
