"""Ply stress and strain components of a results store at given plies and cases (needs ``/plies``).

Components are named as in :mod:`shells.components`. Material-axis stresses and strains are read as stored;
γ13 and γ23 are τ13/G13 and τ23/G23 with the ply's moduli from ``/sections/params``; element-axis values are
rotated by the ply angle plus the cell's material angle (docs/conventions.md: σ_xy = T(θ+φ) σ_12,
ε_xy = T(−(θ+φ))ᵀ ε_12, (τxz, τyz) = R(θ+φ)ᵀ (τ13, τ23)).
"""

from __future__ import annotations

import numpy as np

from shells import params as P
from shells.components import MATERIAL_STRAIN, MATERIAL_STRESS

from bridge.results.store import StoreReader


def gather(st: StoreReader, name: str, ply: np.ndarray, case: np.ndarray) -> np.ndarray:
    """(ncell, 3 points, k) of /plies/``name`` at each cell's ply and case (NaN where either is −1)."""
    data = st.h5[f"plies/{name}"]
    n = data.shape[1]
    out = np.full((n, 3, data.shape[-1]), np.nan)
    cells = np.arange(n)
    for j in np.unique(case[case >= 0]):
        sel = (case == j) & (ply >= 0)
        block = data[int(j)]
        out[sel] = block[cells[sel], ply[sel]]
    return out


def component_states(st: StoreReader, name: str, ply: np.ndarray, case: np.ndarray) -> np.ndarray:
    """(ncell, 3 points) of one component at each cell's ply and case."""
    stress = name in MATERIAL_STRESS or name.startswith(("sigma_", "tau_"))
    if name in MATERIAL_STRESS[:3]:
        return gather(st, "stress", ply, case)[..., MATERIAL_STRESS.index(name)]
    if name in MATERIAL_STRESS[3:]:
        return gather(st, "transverse_shear", ply, case)[..., MATERIAL_STRESS.index(name) - 3]
    if name in MATERIAL_STRAIN[:3]:
        return gather(st, "strain", ply, case)[..., MATERIAL_STRAIN.index(name)]
    tables = st.tables()
    section = st.array("model/section")
    row = np.where(ply >= 0, tables.first[section] + np.maximum(ply, 0), 0)
    shear = gather(st, "transverse_shear", ply, case)
    if name in MATERIAL_STRAIN[3:]:
        k = MATERIAL_STRAIN.index(name) - 3
        modulus = tables.params[row, P.G13 if k == 0 else P.G23]
        return shear[..., k] / np.where(modulus > 0, modulus, np.nan)[:, None]
    from shells.rotation import shear_rotation, stress_rotation

    angle = np.degrees(np.arctan2(tables.cs[row, 1], tables.cs[row, 0])) + st.array("model/material_angle")
    if name in ("tau_xz", "tau_yz", "gamma_xz", "gamma_yz"):
        if not stress:
            g = tables.params[row][:, [P.G13, P.G23]]
            shear = shear / np.where(g > 0, g, np.nan)[:, None, :]
        out = np.einsum("cji,cpj->cpi", shear_rotation(angle), shear)   # (τxz, τyz) = Rᵀ (τ13, τ23)
        return out[..., 0 if name.endswith("xz") else 1]
    plane = gather(st, "stress" if stress else "strain", ply, case)
    T = stress_rotation(angle) if stress else np.swapaxes(stress_rotation(-angle), -1, -2)
    out = np.einsum("cij,cpj->cpi", T, plane)
    return out[..., ("sigma_x", "sigma_y", "tau_xy").index(name) if stress else
               ("eps_x", "eps_y", "gamma_xy").index(name)]
