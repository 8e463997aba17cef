"""Transverse shear through the thickness: stress distribution and stiffness H.

The equilibrium-based method of Rolfes & Rohwer (Int. J. Numer. Meth. Engng 40
(1997) 51–60): neglecting derivatives of N and Mxy and mixed derivatives of Mx
and My, two cylindrical-bending states remain, Mx,x = Qx and My,y = Qy. The
in-plane stress gradients of each follow from the section compliance; integrating
the equilibrium equations τxz,z = −(σx,x + τxy,y) and τyz,z = −(τxy,x + σy,y)
from the bottom face (τ = 0) gives τ(z) = F(z)·(Qx, Qy). Energy equivalence then
gives H = [∫ Fᵀ G⁻¹ F dz]⁻¹, with no correction factor.

Everything is in laminate axes, order (xz, yz); Q in force/length, H in
force/length.
"""

from __future__ import annotations

import numpy as np

from .defaults import SHEAR_FACTOR
from .laminate import SectionProperties

#: Through-thickness points of a ply as fractions of its thickness: bottom, middle, top.
PLY_POINTS = np.array([0.0, 0.5, 1.0])

# Three-point Gauss rule on [0, 1]: exact for the quartic integrand Fᵀ G⁻¹ F.
_GAUSS_X = 0.5 + 0.5 * np.array([-np.sqrt(0.6), 0.0, np.sqrt(0.6)])
_GAUSS_W = np.array([5.0, 8.0, 5.0]) / 18.0


def equilibrium_shear(sp: SectionProperties, dM_dx: np.ndarray, dM_dy: np.ndarray,
                      fractions: np.ndarray = PLY_POINTS) -> np.ndarray:
    """Transverse shear through the thickness from the moment gradients, by integrating equilibrium.

    τxz,z = −(σx,x + τxy,y), τyz,z = −(τxy,x + σy,y), τ = 0 at the bottom face; the in-plane stress
    gradients follow from ∂(ε⁰, κ) = [A B; B D]⁻¹ ∂(N, M) with N constant.

    Parameters
    ----------
    sp : SectionProperties
    dM_dx, dM_dy : array_like (3,) or (3, k)
        (Mx, My, Mxy) differentiated along x and along y (moment/length²); k load states at once.
    fractions : array_like (m,)
        Positions inside each ply (0 bottom, 1 top).

    Returns
    -------
    ndarray (nply, m, 2) or (nply, m, 2, k)
        (τxz, τyz) in laminate axes (force/length²).
    """
    dM_dx, dM_dy = np.asarray(dM_dx, dtype=float), np.asarray(dM_dy, dtype=float)
    zero = np.zeros_like(dM_dx)
    return resultant_shear(sp, np.concatenate([zero, dM_dx]), np.concatenate([zero, dM_dy]), fractions)


def resultant_shear(sp: SectionProperties, dR_dx: np.ndarray, dR_dy: np.ndarray,
                    fractions: np.ndarray = PLY_POINTS) -> np.ndarray:
    """Transverse shear through the thickness from the gradients of all six resultants (N, M).

    As :func:`equilibrium_shear` with ∂(ε⁰, κ) = [A B; B D]⁻¹ ∂(N, M): ``dR_dx``, ``dR_dy`` are (6,) or (6, k)
    gradients of (Nx, Ny, Nxy, Mx, My, Mxy) about the reference surface, laminate axes. The top face carries
    τ = −(Nx,x + Nxy,y, Nxy,x + Ny,y): zero only when the membrane gradients are in equilibrium.
    """
    comp = np.linalg.inv(sp.ABD)
    gx = comp @ np.asarray(dR_dx, dtype=float)
    gy = comp @ np.asarray(dR_dy, dtype=float)
    zb, zt = sp.z[:-1], sp.z[1:]

    def partial(z_lo, z_hi, k, g):        # ∫ Q̄ (e + ζ c) dζ over [z_lo, z_hi] in ply k
        return sp.Qbar[k] @ (g[:3] * (z_hi - z_lo) + g[3:] * (z_hi ** 2 - z_lo ** 2) / 2.0)

    def rates(z_lo, z_hi, k):              # ∫ (τxz,z, τyz,z) dζ
        sx, sy = partial(z_lo, z_hi, k, gx), partial(z_lo, z_hi, k, gy)
        return -np.stack([sx[0] + sy[2], sx[2] + sy[1]])

    n = len(zb)
    below = [np.zeros_like(rates(zb[0], zb[0], 0))]
    for k in range(1, n):
        below.append(below[-1] + rates(zb[k - 1], zt[k - 1], k - 1))
    frac = np.asarray(fractions, dtype=float)
    return np.stack([np.stack([below[k] + rates(zb[k], zb[k] + f * (zt[k] - zb[k]), k) for f in frac])
                     for k in range(n)])


def shear_distribution(sp: SectionProperties, fractions: np.ndarray = PLY_POINTS) -> np.ndarray:
    """Transverse shear stress per unit shear force at points inside every ply (Rolfes & Rohwer 1997).

    The two cylindrical-bending states Mx,x = Qx and My,y = Qy (derivatives of N and Mxy and mixed
    derivatives neglected) of :func:`equilibrium_shear`.

    Returns
    -------
    F : ndarray (nply, m, 2, 2)
        (τxz, τyz) = F · (Qx, Qy) at each point, laminate axes (1/length).
    """
    unit = np.eye(3)[:, :2]                  # columns: state Qx (Mx,x = 1), state Qy (My,y = 1)
    dx = np.stack([unit[:, 0], np.zeros(3)], axis=1)
    dy = np.stack([np.zeros(3), unit[:, 1]], axis=1)
    return equilibrium_shear(sp, dx, dy, fractions)


def equilibrium_shear_stiffness(sp: SectionProperties) -> np.ndarray:
    """H by energy equivalence of the equilibrium distribution (Rolfes & Rohwer 1997), 2×2 (xz, yz)."""
    F = shear_distribution(sp, _GAUSS_X)
    Ginv = np.linalg.inv(sp.Gbar)                       # (n, 2, 2)
    t = np.diff(sp.z)
    flex = np.einsum("k,g,kgji,kjl,kglm->im", t, _GAUSS_W, F, Ginv, F)
    return np.linalg.inv(flex)


def factor_shear_stiffness(sp: SectionProperties, factor: float = SHEAR_FACTOR) -> np.ndarray:
    """H = k · Σ Ḡ t, the shear-correction-factor estimate (k = :data:`shells.defaults.SHEAR_FACTOR` by default)."""
    return factor * np.einsum("k,kij->ij", np.diff(sp.z), sp.Gbar)


def shear_correction_factors(sp: SectionProperties) -> tuple[float, float]:
    """Energy-consistent correction factors kx = H11 / Σ Ḡ11 t, ky = H22 / Σ Ḡ22 t."""
    H = equilibrium_shear_stiffness(sp)
    G = factor_shear_stiffness(sp, 1.0)
    return float(H[0, 0] / G[0, 0]), float(H[1, 1] / G[1, 1])
