"""Sandwich-panel formulas for the face allowables and the core shear stress.

Pure functions on floats or numpy arrays (broadcast; inputs never modified),
one consistent unit system (stress in force/length², lengths in length). The
section builder uses them to fill the per-ply allowables ``wrinkling`` and
``dimpling`` of :mod:`shells.params` for faces next to a core; the criteria
``wrinkling``, ``dimpling`` and ``core-shear`` then compare stresses with them.
"""

from __future__ import annotations

import numpy as np

from .defaults import WRINKLING_COEFFICIENT
from .errors import MaterialError

# The design wrinkling coefficient (0.5, after Hoff & Mautner 1945) is the analysis default, declared once:
# shells.defaults.WRINKLING_COEFFICIENT.

#: Allen, *Analysis and Design of Structural Sandwich Panels*, 1969.
WRINKLING_K_ALLEN = 0.78
#: Theoretical value for a thick core (Hoff & Mautner 1945).
WRINKLING_K_THEORY = 0.91


def _positive(**values) -> list[np.ndarray]:
    out = []
    for key, value in values.items():
        arr = np.asarray(value, dtype=np.float64)
        if not np.all(np.isfinite(arr) & (arr > 0)):
            raise MaterialError(f"sandwich formula: {key} = {value!r} must be positive and finite; fix the "
                                "face or core properties")
        out.append(arr)
    return out


def wrinkling_stress(Ef, Ec, Gc, k=WRINKLING_COEFFICIENT):
    """Face wrinkling allowable ``σ_wr = k·(Ef·Ec·Gc)^(1/3)`` (compressive, positive magnitude).

    Parameters
    ----------
    Ef : float or array
        Face modulus along the load (stress).
    Ec : float or array
        Core through-thickness (flatwise) modulus (stress).
    Gc : float or array
        Core transverse shear modulus in the plane of the load (stress).
    k : float
        Coefficient: :data:`shells.defaults.WRINKLING_COEFFICIENT` (0.5) by default (design value after Hoff &
        Mautner 1945),
        0.78 (Allen 1969), 0.91 (theory).

    Returns
    -------
    float or ndarray
        Wrinkling stress, same units as the moduli.
    """
    ef, ec, gc, kk = _positive(Ef=Ef, Ec=Ec, Gc=Gc, k=k)
    return kk * np.cbrt(ef * ec * gc)


def dimpling_stress(Ef, nuf, tf, cell_size):
    """Intracell dimpling allowable ``σ_dim = 2·Ef/(1 − νf²)·(tf/s)²`` (common practice).

    Parameters
    ----------
    Ef : float or array
        Face modulus (stress).
    nuf : float or array
        Face Poisson's ratio, |νf| < 1.
    tf : float or array
        Face thickness (length).
    cell_size : float or array
        Honeycomb cell size s, inscribed-circle diameter (length).

    Returns
    -------
    float or ndarray
        Dimpling stress (compressive, positive magnitude), units of ``Ef``.
    """
    ef, tf_, s = _positive(Ef=Ef, tf=tf, cell_size=cell_size)
    nu = np.asarray(nuf, dtype=np.float64)
    if not np.all(np.abs(nu) < 1.0):
        raise MaterialError(f"sandwich formula: nuf = {nuf!r} must lie in (-1, 1); fix the face properties")
    return 2.0 * ef / (1.0 - nu * nu) * (tf_ / s) ** 2


def face_centroid_distance(core_thickness, t_bottom, t_top):
    """Distance d between the face centroids: ``d = tc + (tf_bottom + tf_top)/2`` (length)."""
    tc, tb, tt = _positive(core_thickness=core_thickness, t_bottom=t_bottom, t_top=t_top)
    return tc + 0.5 * (tb + tt)


def core_shear_stress(Q, d):
    """Core shear stress of a sandwich with thin faces, ``τ ≈ Q/d`` (common practice).

    Parameters
    ----------
    Q : float or array
        Transverse shear force resultant (force/length), any sign; components
        (Qx, Qy) map to (τxz, τyz).
    d : float or array
        Distance between face centroids (length), see :func:`face_centroid_distance`.

    Returns
    -------
    float or ndarray
        Shear stress in the core (force/length²), with the sign of ``Q``.
    """
    (dd,) = _positive(d=d)
    return np.asarray(Q, dtype=np.float64) / dd


def weakest_membrane_modulus(A, thickness):
    """Smallest in-plane Young's modulus of a (face) laminate over all directions, and its Poisson ratio there.

    E(θ) = 1 / (h · vᵀ A⁻¹ v) with v = (cos²θ, sin²θ, cos θ sin θ) (engineering shear), ν(θ) = −wᵀ A⁻¹ v /
    vᵀ A⁻¹ v with w the direction θ + 90°. The minimum over θ does not depend on the laminate axes, so an
    allowable built on it is the same whatever the 0° direction (a conservative face modulus for wrinkling and
    dimpling, common practice).

    Parameters
    ----------
    A : array (3, 3)
        Membrane stiffness of the face (force/length), order x, y, xy.
    thickness : float
        Face thickness (length).

    Returns
    -------
    (E_min, nu) : float, float
    """
    a = np.linalg.inv(np.asarray(A, dtype=np.float64))

    def compliance(theta):
        c, s = np.cos(theta), np.sin(theta)
        v = np.stack([c * c, s * s, c * s])
        return np.einsum("i...,ij,j...->...", v, a, v)

    grid = np.linspace(0.0, np.pi, 721)
    k = int(np.argmax(compliance(grid)))
    lo, hi = grid[k] - np.pi / 720, grid[k] + np.pi / 720
    gold = 0.5 * (np.sqrt(5.0) - 1.0)
    for _ in range(80):                           # golden section on the bracketing interval
        x1, x2 = hi - gold * (hi - lo), lo + gold * (hi - lo)
        if compliance(x1) >= compliance(x2):
            hi = x2
        else:
            lo = x1
    theta = 0.5 * (lo + hi)
    c, s = np.cos(theta), np.sin(theta)
    v, w = np.array([c * c, s * s, c * s]), np.array([s * s, c * c, -c * s])
    q = float(v @ a @ v)
    return 1.0 / (thickness * q), float(-(w @ a @ v) / q)
