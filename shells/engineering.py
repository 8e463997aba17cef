"""Engineering constants and classification flags of a laminate section.

Engineering constants describe the laminate itself, so they are taken about its
**mid-plane**, whatever the reference-surface offset of the section (the offset
moves B and D, never the laminate's moduli). Two sets are given:

- **restrained**: membrane constants from A⁻¹ (curvature held at zero) and
  flexural constants from D⁻¹ (mid-plane strain held at zero);
- **free**: from the 3×3 blocks of the full inverse of the mid-plane ABD
  (the other resultant, M respectively N, is zero and the laminate deforms freely).

For a stack without mid-plane coupling (B_mid = 0, e.g. symmetric) the two are
equal. Free moduli never exceed restrained ones (common practice: the coupled
compliance adds a positive semi-definite term).
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


def mid_plane_offset(sp: SectionProperties) -> float:
    """The offset e of the section: reference surface (z = 0) to the laminate mid-plane.

    From the ply interfaces ``sp.z``, or ``sp.offset`` for an object holding only stiffness (A, B, D, thickness,
    offset), such as a section read back from a results store.
    """
    z = getattr(sp, "z", None)
    return float((z[0] + z[-1]) / 2.0) if z is not None else float(sp.offset)


def mid_plane_stiffness(sp: SectionProperties) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A, B, D about the laminate mid-plane (parallel-axis rule: B_mid = B − e·A, D_mid = D − 2e·B + e²·A)."""
    e = mid_plane_offset(sp)
    return sp.A, sp.B - e * sp.A, sp.D - 2.0 * e * sp.B + e * e * sp.A


def _compliance(sp: SectionProperties, part: str, free: bool) -> np.ndarray:
    A, B, D = mid_plane_stiffness(sp)
    if free:
        full = np.linalg.inv(np.block([[A, B], [B, D]]))
        return full[:3, :3] if part == "membrane" else full[3:, 3:]
    return np.linalg.inv(A if part == "membrane" else D)


def membrane_constants(sp: SectionProperties, free: bool = False) -> dict[str, float]:
    """In-plane engineering constants: Ex = 1/(h·a11), Ey = 1/(h·a22), Gxy = 1/(h·a66), νxy = −a12/a11.

    ``a`` is A⁻¹ (restrained, default) or the membrane block of the mid-plane [A B; B D]⁻¹ (``free=True``).
    Stress unit; ν dimensionless.
    """
    return _constants(_compliance(sp, "membrane", free), sp.thickness)


def flexural_constants(sp: SectionProperties, free: bool = False) -> dict[str, float]:
    """Bending engineering constants about the mid-plane: Ex = 12/(h³·d11), Ey, Gxy alike, νxy = −d12/d11.

    ``d`` is D_mid⁻¹ (restrained, default) or the bending block of the mid-plane [A B; B D]⁻¹ (``free=True``).
    """
    return _constants(_compliance(sp, "flexural", free), sp.thickness ** 3 / 12.0)


def engineering_constants(sp: SectionProperties) -> dict[str, dict[str, dict[str, float]]]:
    """``{"membrane" | "flexural": {"restrained" | "free": {Ex, Ey, Gxy, nuxy, nuyx}}}``, about the mid-plane."""
    return {part: {"restrained": fn(sp), "free": fn(sp, free=True)}
            for part, fn in (("membrane", membrane_constants), ("flexural", flexural_constants))}


def mid_plane_coupled(sp: SectionProperties) -> bool:
    """True when the stack couples extension and bending about its own mid-plane (restrained ≠ free)."""
    A, B, D = mid_plane_stiffness(sp)
    scale = float(np.sqrt(np.abs(A).max() * np.abs(D).max()))
    return not bool(np.all(np.abs(B) <= FLAG_TOLERANCE * scale))


def _small(value: float, scale: float) -> bool:
    return abs(value) <= FLAG_TOLERANCE * scale


def is_symmetric_stack(lam: Laminate) -> bool:
    """True when ply k and ply n+1−k have the same material, angle and thickness (a wound ±θ layer equals a
    wound ∓θ one)."""
    plies = lam.plies
    return all(a.material == b.material and a.thickness == b.thickness and a.wound == b.wound
               and (a.angle == b.angle or (a.wound and a.angle == -b.angle))
               for a, b in zip(plies, reversed(plies)))


def flags(lam: Laminate, sp: SectionProperties) -> dict[str, bool]:
    """Classification of a section.

    Returns
    -------
    dict
        ``symmetric`` (stack mirror-equal about its mid-plane), ``balanced``
        (A16 = A26 = 0), ``coupled`` (B ≠ 0, extension-bending coupling about the
        reference surface, as the solver sees it), ``mid_plane_coupled`` (B_mid ≠ 0:
        the laminate itself couples, so restrained and free constants differ), ``bending_twist`` (D16 or D26 ≠ 0), ``quasi_isotropic``
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
        "mid_plane_coupled": mid_plane_coupled(sp),
        "bending_twist": not (_small(D[0, 2], d_scale) and _small(D[1, 2], d_scale)),
        "quasi_isotropic": balanced and _small(A[0, 0] - A[1, 1], a_scale)
        and _small(A[2, 2] - (A[0, 0] - A[0, 1]) / 2.0, a_scale),
    }
    return {k: bool(v) for k, v in out.items()}


def polar_moduli(sp: SectionProperties, angles_deg: np.ndarray) -> dict[str, np.ndarray]:
    """Membrane and flexural Young's moduli along directions at ``angles_deg`` from laminate x.

    E(θ) = 1 / (h · a'11(θ)) with a' the compliance rotated into the direction θ; restrained constants
    about the mid-plane (A⁻¹ and D_mid⁻¹, see the module notes). ``sp`` needs A, B, D, thickness and either
    the interfaces z or the offset (:func:`mid_plane_offset`).
    """
    T = stress_rotation(np.asarray(angles_deg, dtype=float))
    first = T[..., :, 0]  # unit stress along θ, expressed in laminate axes
    a = _compliance(sp, "membrane", False)
    d = _compliance(sp, "flexural", False)
    h = sp.thickness
    return {
        "membrane": 1.0 / (h * np.einsum("...i,ij,...j->...", first, a, first)),
        "flexural": 12.0 / (h ** 3 * np.einsum("...i,ij,...j->...", first, d, first)),
    }
