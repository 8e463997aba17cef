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

from .laminate import SectionProperties

#: Through-thickness points of a ply as fractions of its thickness: bottom, middle, top.
PLY_POINTS = np.array([0.0, 0.5, 1.0])

# Three-point Gauss rule on [0, 1]: exact for the quartic integrand Fᵀ G⁻¹ F.
_GAUSS_X = 0.5 + 0.5 * np.array([-np.sqrt(0.6), 0.0, np.sqrt(0.6)])
_GAUSS_W = np.array([5.0, 8.0, 5.0]) / 18.0


def shear_distribution(sp: SectionProperties, fractions: np.ndarray = PLY_POINTS) -> np.ndarray:
    """Transverse shear stress per unit shear force at points inside every ply.

    Parameters
    ----------
    sp : SectionProperties
    fractions : array_like (m,)
        Positions inside each ply as fractions of its thickness (0 bottom, 1 top).

    Returns
    -------
    F : ndarray (nply, m, 2, 2)
        (τxz, τyz) = F · (Qx, Qy) at each point, laminate axes. Per unit length
        of Q (1/length).
    """
    comp = np.linalg.inv(sp.ABD)
    g = comp[:, [3, 4]]            # strain/curvature gradients of the states Mx,x = 1 and My,y = 1
    e, c = g[:3], g[3:]            # (3, 2) each
    zb, zt = sp.z[:-1], sp.z[1:]
    # ∫_{zb}^{z} Q̄ (e + ζ c) dζ for each ply; accumulated over the plies below.
    def partial(z_lo, z_hi, k):
        return sp.Qbar[k] @ (e * (z_hi - z_lo) + c * (z_hi ** 2 - z_lo ** 2) / 2.0)

    n = len(zb)
    below = np.zeros((n, 3, 2))
    for k in range(1, n):
        below[k] = below[k - 1] + partial(zb[k - 1], zt[k - 1], k - 1)
    frac = np.asarray(fractions, dtype=float)
    out = np.empty((n, len(frac), 2, 2))
    for k in range(n):
        for j, f in enumerate(frac):
            z = zb[k] + f * (zt[k] - zb[k])
            I = below[k] + partial(zb[k], z, k)      # (3 stress comps, 2 states)
            # state Qx (column 0): τxz' = −σx,x, τyz' = −τxy,x; state Qy (column 1): τxz' = −τxy,y, τyz' = −σy,y
            out[k, j, 0, 0], out[k, j, 1, 0] = -I[0, 0], -I[2, 0]
            out[k, j, 0, 1], out[k, j, 1, 1] = -I[2, 1], -I[1, 1]
    return out


def equilibrium_shear_stiffness(sp: SectionProperties) -> np.ndarray:
    """H by energy equivalence of the equilibrium distribution (Rolfes & Rohwer 1997), 2×2 (xz, yz)."""
    F = shear_distribution(sp, _GAUSS_X)
    Ginv = np.linalg.inv(sp.Gbar)                       # (n, 2, 2)
    t = np.diff(sp.z)
    flex = np.einsum("k,g,kgji,kjl,kglm->im", t, _GAUSS_W, F, Ginv, F)
    return np.linalg.inv(flex)


def factor_shear_stiffness(sp: SectionProperties, factor: float = 5.0 / 6.0) -> np.ndarray:
    """H = k · Σ Ḡ t, the shear-correction-factor estimate (k = 5/6 by default: common practice)."""
    return factor * np.einsum("k,kij->ij", np.diff(sp.z), sp.Gbar)


def shear_correction_factors(sp: SectionProperties) -> tuple[float, float]:
    """Energy-consistent correction factors kx = H11 / Σ Ḡ11 t, ky = H22 / Σ Ḡ22 t."""
    H = equilibrium_shear_stiffness(sp)
    G = factor_shear_stiffness(sp, 1.0)
    return float(H[0, 0] / G[0, 0]), float(H[1, 1] / G[1, 1])
