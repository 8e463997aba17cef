"""Engineering constants and classification flags of a laminate section.

Membrane constants come from A⁻¹ and flexural constants from D⁻¹ (curvature,
respectively mid-plane strain, restrained): for a symmetric stack they are the
usual laminate constants; for a coupled stack they are the restrained values
(common practice), and the ``coupled`` flag says so.
"""

from __future__ import annotations

import numpy as np

from .laminate import Laminate, SectionProperties
from .rotation import stress_rotation

#: Relative tolerance of the flags (relative to the size of the matrix compared).
FLAG_TOLERANCE = 1e-9


def _constants(compliance: np.ndarray, scale: float) -> dict[str, float]:
    """Ex, Ey, Gxy, nuxy, nuyx from a 3×3 compliance times a thickness scale."""
    a = compliance
    return {
        "Ex": float(1.0 / (scale * a[0, 0])),
        "Ey": float(1.0 / (scale * a[1, 1])),
        "Gxy": float(1.0 / (scale * a[2, 2])),
        "nuxy": float(-a[0, 1] / a[0, 0]),
        "nuyx": float(-a[0, 1] / a[1, 1]),
    }


def membrane_constants(sp: SectionProperties) -> dict[str, float]:
    """In-plane engineering constants: Ex = 1/(h·a11), Ey = 1/(h·a22), Gxy = 1/(h·a66), νxy = −a12/a11, a = A⁻¹."""
    return _constants(np.linalg.inv(sp.A), sp.thickness)


def flexural_constants(sp: SectionProperties) -> dict[str, float]:
    """Bending engineering constants: Ex = 12/(h³·d11) etc., d = D⁻¹ (about the reference surface)."""
    return _constants(np.linalg.inv(sp.D), sp.thickness ** 3 / 12.0)


def _small(value: float, scale: float) -> bool:
    return abs(value) <= FLAG_TOLERANCE * scale


def is_symmetric_stack(lam: Laminate) -> bool:
    """True when ply k and ply n+1−k have the same material, angle and thickness."""
    plies = lam.plies
    return all(a.material == b.material and a.angle == b.angle and a.thickness == b.thickness
               for a, b in zip(plies, reversed(plies)))


def flags(lam: Laminate, sp: SectionProperties) -> dict[str, bool]:
    """Classification of a section.

    Returns
    -------
    dict
        ``symmetric`` (stack mirror-equal about its mid-plane), ``balanced``
        (A16 = A26 = 0), ``coupled`` (B ≠ 0, extension-bending coupling about the
        reference surface), ``bending_twist`` (D16 or D26 ≠ 0), ``quasi_isotropic``
        (A11 = A22, A16 = A26 = 0 and A66 = (A11 − A12)/2: in-plane isotropy).
    """
    A, B, D = sp.A, sp.B, sp.D
    a_scale = float(np.abs(A).max())
    d_scale = float(np.abs(D).max())
    b_scale = float(np.sqrt(a_scale * d_scale))
    balanced = _small(A[0, 2], a_scale) and _small(A[1, 2], a_scale)
    out = {
        "symmetric": is_symmetric_stack(lam),
        "balanced": balanced,
        "coupled": not bool(np.all(np.abs(B) <= FLAG_TOLERANCE * b_scale)),
        "bending_twist": not (_small(D[0, 2], d_scale) and _small(D[1, 2], d_scale)),
        "quasi_isotropic": balanced and _small(A[0, 0] - A[1, 1], a_scale)
        and _small(A[2, 2] - (A[0, 0] - A[0, 1]) / 2.0, a_scale),
    }
    return {k: bool(v) for k, v in out.items()}


def polar_moduli(sp: SectionProperties, angles_deg: np.ndarray) -> dict[str, np.ndarray]:
    """Membrane and flexural Young's moduli along directions at ``angles_deg`` from laminate x.

    E(θ) = 1 / (h · a'11(θ)) with a' the compliance rotated into the direction θ.
    """
    T = stress_rotation(np.asarray(angles_deg, dtype=float))
    first = T[..., :, 0]  # unit stress along θ, expressed in laminate axes
    a = np.linalg.inv(sp.A)
    d = np.linalg.inv(sp.D)
    h = sp.thickness
    return {
        "membrane": 1.0 / (h * np.einsum("...i,ij,...j->...", first, a, first)),
        "flexural": 12.0 / (h ** 3 * np.einsum("...i,ij,...j->...", first, d, first)),
    }
