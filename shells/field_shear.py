"""Transverse shear from the in-plane gradients of the resultant field (the ``"field"`` method).

The Q-only method (:func:`shells.shear.shear_distribution`) splits (Qx, Qy) into two cylindrical-bending
states and leaves out Mxy and the cross gradients. When the gradients of the resultants are known (fitted over
the mesh, :mod:`postproc.gradients`), the full equilibrium τxz,z = −(σx,x + τxy,y), τyz,z = −(τxy,x + σy,y)
can be integrated instead (:func:`shells.shear.resultant_shear`). It is linear in the gradient vector

    g = (Nx,x, Ny,x, Nxy,x, Mx,x, My,x, Mxy,x, Nx,y, Ny,y, Nxy,y, Mx,y, My,y, Mxy,y)

(laminate axes, about the reference surface), so each section gets one matrix G with τ = G·g at every ply
point. Membrane gradients enter only for sections coupled about the reference (B ≠ 0), where they bend the
laminate; the residual they leave on the top face (−div N, non-zero when the fitted N is not exactly in
equilibrium) is then removed linearly through the thickness so that both faces stay free (common practice).
"""

from __future__ import annotations

import numpy as np

from .laminate import SectionProperties
from .shear import PLY_POINTS, resultant_shear

#: Names of the 12 gradient components, in order.
GRADIENT_COMPONENTS = tuple(f"{r},{d}" for d in "xy" for r in ("Nx", "Ny", "Nxy", "Mx", "My", "Mxy"))


def couples(sp: SectionProperties, tolerance: float = 1e-9) -> bool:
    """True when B ≠ 0 about the reference surface (membrane gradients then bend the section)."""
    scale = float(np.sqrt(np.abs(sp.A).max() * np.abs(sp.D).max()))
    return bool(np.abs(sp.B).max() > tolerance * scale)


def gradient_shear_matrix(sp: SectionProperties, fractions: np.ndarray = PLY_POINTS,
                          membrane: bool | None = None) -> np.ndarray:
    """The matrix G of one section: (τxz, τyz) = G · g at points inside every ply.

    Parameters
    ----------
    sp : SectionProperties
    fractions : array_like (m,)
        Positions inside each ply (0 bottom, 1 top).
    membrane : bool, optional
        Include the membrane gradients (default: when the section couples, :func:`couples`).

    Returns
    -------
    G : ndarray (nply, m, 2, 12)
        Laminate axes; g in the order of :data:`GRADIENT_COMPONENTS` (force/length³ → force/length²: 1/length).
    """
    membrane = couples(sp) if membrane is None else membrane
    unit = np.eye(6)
    zero = np.zeros((6, 6))
    if not membrane:
        unit = unit.copy()
        unit[:3, :3] = 0.0
    dx = np.concatenate([unit, zero], axis=1)          # columns: the 12 unit gradients
    dy = np.concatenate([zero, unit], axis=1)
    G = resultant_shear(sp, dx, dy, fractions)          # (nply, m, 2, 12)
    if membrane:
        top = resultant_shear(sp, dx, dy, np.array([1.0]))[-1, 0]      # (2, 12) at the top face
        z = np.asarray(sp.z, dtype=float)
        zb, zt = z[:-1], z[1:]
        frac = np.asarray(fractions, dtype=float)
        s = ((zb[:, None] + frac[None, :] * (zt - zb)[:, None]) - z[0]) / (z[-1] - z[0])
        G = G - s[:, :, None, None] * top[None, None]
    return G


def shear_force(g: np.ndarray) -> np.ndarray:
    """(Qx, Qy) = (Mx,x + Mxy,y, Mxy,x + My,y) of gradient vectors g (..., 12); same axes as g."""
    g = np.asarray(g, dtype=float)
    return np.stack([g[..., 3] + g[..., 11], g[..., 5] + g[..., 10]], axis=-1)
