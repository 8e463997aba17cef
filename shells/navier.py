"""Navier series solution of a simply supported rectangular plate with transverse shear.

First-order shear deformation (Reissner–Mindlin) plate of bending stiffness D
and transverse shear stiffness H, simply supported on all four edges
(w = 0, M_normal = 0, tangential rotation = 0), 0 ≤ x ≤ a, 0 ≤ y ≤ b, under a
transverse load q(x, y) in +z expanded in double sine series. Each term
w = W sin αx sin βy, φx = X cos αx sin βy, φy = Y sin αx cos βy (α = mπ/a,
β = nπ/b) solves the 3×3 system from

    Mx,x + Mxy,y = Qx,   Mxy,x + My,y = Qy,   Qx,x + Qy,y + q = 0,

with κ = (φx,x, φy,y, φx,y + φy,x), γ = (w,x + φx, w,y + φy), M = D κ, Q = H γ.
Exact for specially orthotropic sections (B = 0, D16 = D26 = 0, H12 = 0);
those coupling terms are neglected otherwise. The classical (thin-plate)
solution is the limit H → ∞ (``H=None``).

Signs follow docs/conventions.md: a load in +z gives positive Mx at the
centre, putting the top (+z) face in tension.
"""

from __future__ import annotations

import numpy as np

#: Default number of odd terms per direction for a uniform load.
UNIFORM_TERMS = 41


def _coefficients(D: np.ndarray, H: np.ndarray | None, alpha: np.ndarray, beta: np.ndarray,
                  q: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    D11, D12, D22, D66 = D[0, 0], D[0, 1], D[1, 1], D[2, 2]
    a2, b2, ab = alpha ** 2, beta ** 2, alpha * beta
    if H is None:
        # Classical plate: φx = −w,x, φy = −w,y.
        W = q / (D11 * a2 ** 2 + 2.0 * (D12 + 2.0 * D66) * a2 * b2 + D22 * b2 ** 2)
        return W, -alpha * W, -beta * W
    H11, H22 = H[0, 0], H[1, 1]
    K = np.empty(alpha.shape + (3, 3))
    K[..., 0, 0] = H11 * a2 + H22 * b2
    K[..., 0, 1] = K[..., 1, 0] = H11 * alpha
    K[..., 0, 2] = K[..., 2, 0] = H22 * beta
    K[..., 1, 1] = D11 * a2 + D66 * b2 + H11
    K[..., 1, 2] = K[..., 2, 1] = (D12 + D66) * ab
    K[..., 2, 2] = D66 * a2 + D22 * b2 + H22
    rhs = np.zeros(alpha.shape + (3,))
    rhs[..., 0] = q
    sol = np.linalg.solve(K, rhs[..., None])[..., 0]
    return sol[..., 0], sol[..., 1], sol[..., 2]


def plate_fields(D: np.ndarray, H: np.ndarray | None, a: float, b: float, x: np.ndarray, y: np.ndarray,
                 q0: float = 1.0, load: str = "uniform", terms: int = UNIFORM_TERMS) -> dict[str, np.ndarray]:
    """Deflection and resultants of the plate at points (x, y).

    Parameters
    ----------
    D : (3, 3)
        Bending stiffness (force·length), order x, y, xy.
    H : (2, 2) or None
        Transverse shear stiffness (force/length), order xz, yz; None for the classical plate.
    a, b : float
        Plate lengths along x and y (length).
    x, y : array_like
        Points, same shape.
    q0 : float
        Load intensity (force/length²), positive along +z.
    load : {"uniform", "sine"}
        q = q0 everywhere (odd-term series), or q = q0 sin(πx/a) sin(πy/b) (one term).
    terms : int
        Odd terms per direction of the uniform-load series.

    Returns
    -------
    dict
        ``w`` (length); ``Mx``, ``My``, ``Mxy`` (moment/length); ``Qx``, ``Qy`` (force/length), each of the
        shape of ``x``.
    """
    x, y = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
    if load == "sine":
        m = n = np.array([1.0])
        qmn = np.array([[q0]])
    elif load == "uniform":
        m = n = np.arange(1, 2 * terms, 2, dtype=float)
        qmn = 16.0 * q0 / (np.pi ** 2 * m[:, None] * n[None, :])
    else:
        raise ValueError(f"load must be 'uniform' or 'sine', got {load!r}")
    alpha = (m * np.pi / a)[:, None] * np.ones_like(n)[None, :]
    beta = np.ones_like(m)[:, None] * (n * np.pi / b)[None, :]
    W, X, Y = _coefficients(np.asarray(D, float), None if H is None else np.asarray(H, float), alpha, beta, qmn)
    ax = np.multiply.outer(x, alpha)
    by = np.multiply.outer(y, beta)
    sx, cx, sy, cy = np.sin(ax), np.cos(ax), np.sin(by), np.cos(by)
    D11, D12, D22, D66 = D[0][0], D[0][1], D[1][1], D[2][2]
    kx = -alpha * X          # coefficient of sin sin in φx,x
    ky = -beta * Y
    kxy = beta * X + alpha * Y   # coefficient of cos cos
    out = {
        "w": (W * sx * sy).sum(axis=(-2, -1)),
        "Mx": ((D11 * kx + D12 * ky) * sx * sy).sum(axis=(-2, -1)),
        "My": ((D12 * kx + D22 * ky) * sx * sy).sum(axis=(-2, -1)),
        "Mxy": (D66 * kxy * cx * cy).sum(axis=(-2, -1)),
    }
    if H is None:
        # Qx = Mx,x + Mxy,y, Qy = Mxy,x + My,y.
        qx = (D11 * kx + D12 * ky) * alpha - D66 * kxy * beta
        qy = -D66 * kxy * alpha + (D12 * kx + D22 * ky) * beta
    else:
        qx = H[0][0] * (alpha * W + X)
        qy = H[1][1] * (beta * W + Y)
    out["Qx"] = (qx * cx * sy).sum(axis=(-2, -1))
    out["Qy"] = (qy * sx * cy).sum(axis=(-2, -1))
    return out


def resultants(fields: dict[str, np.ndarray], N: tuple[float, float, float] = (0.0, 0.0, 0.0)) -> np.ndarray:
    """Stack plate fields into resultants (..., 8): Nx, Ny, Nxy (uniform, given), Mx, My, Mxy, Qx, Qy."""
    shape = fields["Mx"].shape
    out = np.empty(shape + (8,))
    out[..., 0:3] = np.asarray(N, dtype=float)
    for k, name in enumerate(("Mx", "My", "Mxy", "Qx", "Qy"), start=3):
        out[..., k] = fields[name]
    return out
