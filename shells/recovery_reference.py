"""Plain-numpy ply recovery: the reference the numba kernel is tested against,
and the full through-thickness state of a few cells for plots and comparisons.

Written independently of :mod:`shells.recovery`: matrices from
:mod:`shells.rotation`, no hand-expanded products.
"""

from __future__ import annotations

import numpy as np

from .recovery_args import per_cell
from .recovery_tables import ROUNDOFF, SectionTables
from .rotation import shear_rotation, stress_rotation


def _drop_roundoff(e: np.ndarray, zmax: float) -> np.ndarray:
    """Mid-plane strains and curvatures (…, 6) with round-off components set to zero (docs/criteria.md)."""
    size = np.abs(e) * np.array([1.0, 1.0, 1.0, zmax, zmax, zmax])
    return np.where(size <= ROUNDOFF * size.max(axis=-1, keepdims=True), 0.0, e)


def ply_states(tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray, R: np.ndarray,
               dT: np.ndarray, dM: np.ndarray | None = None, pres: np.ndarray | None = None,
               shear: np.ndarray | None = None, held: np.ndarray | None = None,
               held_pressure: np.ndarray | None = None, held_shear: np.ndarray | None = None) -> dict:
    """Material-axis states at the bottom, middle and top of every ply.

    Parameters
    ----------
    tables : SectionTables
    cell_sec : int (ncell,)
        Section id per cell.
    phi_deg : float (ncell,)
        Material angle per cell (element x → laminate x), degrees.
    R : float (ncase, ncell, 8)
        Resultants in the element frame (Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy).
    dT : float (ncase, ncell)
        Temperature change.
    dM, pres : float (ncase,) or (ncase, ncell), optional
        Moisture change and lateral pressure per case (or per case and cell).
    shear : float (ncase, ncell, maxply, 3, 2), optional
        (τxz, τyz) at every ply point in laminate axes, replacing F·(Qx, Qy) (field transverse shear).
    held : float (ncase, ncell, 8), optional
        Resultants of held cases (element frame): part of the fixed state.
    held_pressure : float (ncase,) or (ncase, ncell), optional
        Lateral pressure of the held part.
    held_shear : float (ncase, ncell, maxply, 3, 2), optional
        As ``shear``, for the held part.

    Returns
    -------
    dict of arrays, NaN past a cell's ply count
        ``mech`` and ``fixed`` (ncase, ncell, maxply, 3, 6) point states (σ1, σ2, τ12, τ13, τ23, σ3);
        ``stress`` (…, 3) total (σ1, σ2, τ12); ``strain`` (…, 3) total (ε1, ε2, γ12);
        ``shear`` (…, 2) total (τ13, τ23); ``z`` (ncell, maxply, 3).
    """
    R = np.asarray(R, dtype=float)
    ncase, ncell = R.shape[:2]
    dM, pres = per_cell(dM, ncase, ncell), per_cell(pres, ncase, ncell)
    mp = tables.max_plies
    mech = np.full((ncase, ncell, mp, 3, 6), np.nan)
    fixed = np.full_like(mech, np.nan)
    strain = np.full((ncase, ncell, mp, 3, 3), np.nan)
    zout = np.full((ncell, mp, 3), np.nan)
    Tinv = stress_rotation(-np.asarray(phi_deg, dtype=float))      # (ncell, 3, 3): element → laminate
    Rq = shear_rotation(np.asarray(phi_deg, dtype=float))
    N = np.einsum("cij,scj->sci", Tinv, R[..., 0:3])
    M = np.einsum("cij,scj->sci", Tinv, R[..., 3:6])
    Qs = np.einsum("cij,scj->sci", Rq, R[..., 6:8])
    Rh = np.zeros_like(R) if held is None else np.asarray(held, dtype=float)
    hpres = per_cell(held_pressure, ncase, ncell)
    Nh = np.einsum("cij,scj->sci", Tinv, Rh[..., 0:3])
    Mh = np.einsum("cij,scj->sci", Tinv, Rh[..., 3:6])
    Qh = np.einsum("cij,scj->sci", Rq, Rh[..., 6:8])
    for s in np.unique(cell_sec):
        cells = np.flatnonzero(cell_sec == s)
        comp = tables.compliance[s]
        f = tables.fixed[s]
        gen_m = np.concatenate([N[:, cells], M[:, cells]], axis=-1)
        t = dT[:, cells][..., None]
        hm = dM[:, cells][..., None]
        gen_f = np.concatenate([f[0] * t + f[2] * hm + Nh[:, cells], f[1] * t + f[3] * hm + Mh[:, cells]], axis=-1)
        zmax = max(abs(tables.z[tables.first[s], 0]), abs(tables.z[tables.first[s] + tables.nply[s] - 1, 2]))
        em = _drop_roundoff(gen_m @ comp.T, zmax)
        ef = _drop_roundoff(gen_f @ comp.T, zmax)
        for k in range(tables.nply[s]):
            row = tables.first[s] + k
            theta = np.degrees(np.arctan2(tables.cs[row, 1], tables.cs[row, 0]))
            Tt = stress_rotation(theta)
            Rt = shear_rotation(theta)
            q11, q12, q22, q66 = tables.Q[row]
            Qm = np.array([[q11, q12, 0.0], [q12, q22, 0.0], [0.0, 0.0, q66]])
            free = np.array([*(tables.alpha[row] * 1.0), 0.0])
            zs = tables.z[row]
            zout[cells, k] = zs
            for q in range(3):
                eps_m = (em[..., :3] + zs[q] * em[..., 3:]) @ Tt          # Tᵀ ε as row vectors
                eps_f = (ef[..., :3] + zs[q] * ef[..., 3:]) @ Tt
                free_strain = (tables.alpha[row][None, None, :] * dT[:, cells][..., None]
                               + tables.beta[row][None, None, :] * hm)
                free = np.concatenate([free_strain, np.zeros(free_strain.shape[:-1] + (1,))], axis=-1)
                lam = Qs[:, cells] @ tables.F[row, q].T if shear is None else shear[:, cells, k, q]
                tau = lam @ Rt.T
                mech[:, cells, k, q, :3] = eps_m @ Qm.T
                mech[:, cells, k, q, 3:5] = tau
                mech[:, cells, k, q, 5] = -pres[:, cells]
                fixed[:, cells, k, q, :3] = (eps_f - free) @ Qm.T
                lam_h = Qh[:, cells] @ tables.F[row, q].T if held_shear is None else held_shear[:, cells, k, q]
                fixed[:, cells, k, q, 3:5] = lam_h @ Rt.T
                fixed[:, cells, k, q, 5] = -hpres[:, cells]
                strain[:, cells, k, q] = eps_m + eps_f
    return {"mech": mech, "fixed": fixed, "stress": mech[..., :3] + fixed[..., :3], "strain": strain,
            "shear": mech[..., 3:5] + fixed[..., 3:5], "z": zout}
