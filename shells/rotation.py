"""In-plane rotations of stresses, strains, stiffnesses and transverse shear.

Batched over any leading axes (angles in degrees, counter-clockwise about the
shell normal). With c = cos θ, s = sin θ the stress transformation from axes
rotated by θ back to the unrotated axes is

    T(θ) = [[c², s², −2cs], [s², c², 2cs], [cs, −cs, c² − s²]]

so that σ_xy = T σ_12, ε_12 = Tᵀ ε_xy (engineering shear strain) and a
stiffness rotates as Q̄ = T Q Tᵀ (see docs/conventions.md).
"""

from __future__ import annotations

import numpy as np


def stress_rotation(theta_deg: np.ndarray | float) -> np.ndarray:
    """T(θ): stresses in axes rotated by θ → stresses in the unrotated axes.

    Parameters
    ----------
    theta_deg : array_like
        Rotation angle(s), degrees, counter-clockwise about the normal, from the
        unrotated x axis to the rotated 1 axis.

    Returns
    -------
    ndarray, shape (..., 3, 3)
        Order (x, y, xy) rows, (1, 2, 12) columns.
    """
    t = np.radians(np.asarray(theta_deg, dtype=float))
    c, s = np.cos(t), np.sin(t)
    cc, ss, cs = c * c, s * s, c * s
    return np.stack([
        np.stack([cc, ss, -2.0 * cs], axis=-1),
        np.stack([ss, cc, 2.0 * cs], axis=-1),
        np.stack([cs, -cs, cc - ss], axis=-1),
    ], axis=-2)


def shear_rotation(theta_deg: np.ndarray | float) -> np.ndarray:
    """R(θ): transverse shear (τxz, τyz) → (τ13, τ23) in axes rotated by θ.

    Returns
    -------
    ndarray, shape (..., 2, 2)
    """
    t = np.radians(np.asarray(theta_deg, dtype=float))
    c, s = np.cos(t), np.sin(t)
    return np.stack([np.stack([c, s], axis=-1), np.stack([-s, c], axis=-1)], axis=-2)


def rotate_plane_stiffness(C: np.ndarray, theta_deg: np.ndarray | float) -> np.ndarray:
    """Stiffness given in axes rotated by θ, expressed in the unrotated axes: T C Tᵀ.

    Works for Q → Q̄ of a ply and for A, B, D of a section (laminate axes →
    element frame with θ the material angle). Engineering shear throughout.
    """
    T = stress_rotation(theta_deg)
    return np.einsum("...ij,...jk,...lk->...il", T, C, T)


def rotate_shear_stiffness(G: np.ndarray, theta_deg: np.ndarray | float) -> np.ndarray:
    """Transverse shear stiffness (2×2) in rotated axes → unrotated axes: Rᵀ G R."""
    R = shear_rotation(theta_deg)
    return np.einsum("...ji,...jk,...kl->...il", R, G, R)


def strain_to_rotated(eps_xy: np.ndarray, theta_deg: np.ndarray | float) -> np.ndarray:
    """Engineering strains (x, y, xy) → (1, 2, 12) in axes rotated by θ: Tᵀ ε."""
    return np.einsum("...ji,...j->...i", stress_rotation(theta_deg), eps_xy)


def stress_to_rotated(sig_xy: np.ndarray, theta_deg: np.ndarray | float) -> np.ndarray:
    """Stresses (x, y, xy) → (1, 2, 12) in axes rotated by θ: T(−θ) σ."""
    return np.einsum("...ij,...j->...i", stress_rotation(-np.asarray(theta_deg, dtype=float)), sig_xy)


def expansion_to_unrotated(alpha_12: np.ndarray, theta_deg: np.ndarray | float) -> np.ndarray:
    """Expansion coefficients (1, 2, 12; engineering shear) → (x, y, xy): T⁻ᵀ α = T(−θ)ᵀ α."""
    return np.einsum("...ji,...j->...i", stress_rotation(-np.asarray(theta_deg, dtype=float)), alpha_12)
