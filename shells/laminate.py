"""Plies, laminates and their section properties (classical lamination theory).

Conventions (docs/conventions.md): ply 1 at the bottom, z along the normal,
ply angles counter-clockwise from the laminate x axis, engineering shear, the
reference surface at z = 0 with the laminate mid-plane at ``offset``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import LayupError
from .materials import Material
from .rotation import expansion_to_unrotated, rotate_plane_stiffness, rotate_shear_stiffness


@dataclass(frozen=True)
class Ply:
    """One layer of a stack: a material at an angle with a thickness (length unit of the definition)."""

    material: Material
    angle: float
    thickness: float


@dataclass(frozen=True)
class Laminate:
    """A named stack of plies, listed from ply 1 (bottom) upward.

    Parameters
    ----------
    name : str
        The laminate's name in the definition.
    plies : tuple of Ply
        Bottom to top.
    offset : float
        Distance from the reference surface (z = 0) to the mid-plane, along the normal.
    notation : str or None
        The stacking sequence as the user wrote it (for reports), None for an explicit ply list.
    """

    name: str
    plies: tuple[Ply, ...]
    offset: float = 0.0
    notation: str | None = None

    def __post_init__(self):
        if not self.plies:
            raise LayupError(f"laminate '{self.name}' has no plies; give a layup or a plies list")
        for k, ply in enumerate(self.plies, start=1):
            if not ply.thickness > 0:
                raise LayupError(f"laminate '{self.name}', ply {k}: thickness {ply.thickness!r} must be positive")

    @property
    def thickness(self) -> float:
        return float(sum(p.thickness for p in self.plies))

    def with_offset(self, offset: float) -> "Laminate":
        return Laminate(self.name, self.plies, offset, self.notation)


@dataclass(frozen=True)
class SectionProperties:
    """Section stiffness and derived data of one laminate, in laminate axes.

    Attributes
    ----------
    z : ndarray (n + 1,)
        Ply interfaces, bottom to top (length).
    A, B, D : ndarray (3, 3)
        Extension (force/length), coupling (force), bending (force·length) stiffness, order x, y, xy.
    NT, MT : ndarray (3,)
        Thermal force and moment resultants per unit temperature rise.
    NH, MH : ndarray (3,)
        Moisture resultants per unit moisture change.
    Qbar : ndarray (n, 3, 3)
        Ply stiffness in laminate axes.
    Gbar : ndarray (n, 2, 2)
        Ply transverse shear stiffness in laminate axes, order (xz, yz).
    """

    thickness: float
    areal_mass: float
    z: np.ndarray
    A: np.ndarray
    B: np.ndarray
    D: np.ndarray
    NT: np.ndarray
    MT: np.ndarray
    NH: np.ndarray
    MH: np.ndarray
    Qbar: np.ndarray = field(repr=False)
    Gbar: np.ndarray = field(repr=False)

    @property
    def ABD(self) -> np.ndarray:
        """The 6×6 stiffness [[A, B], [B, D]]."""
        return np.block([[self.A, self.B], [self.B, self.D]])


def interfaces(thicknesses: np.ndarray, offset: float = 0.0) -> np.ndarray:
    """Ply interface coordinates z_0 … z_n for plies listed bottom to top."""
    t = np.asarray(thicknesses, dtype=float)
    return offset - t.sum() / 2.0 + np.concatenate([[0.0], np.cumsum(t)])


def ply_arrays(lam: Laminate) -> dict[str, np.ndarray]:
    """Per-ply arrays of a laminate: angle, thickness, Q, G (material axes), alpha, beta, density."""
    plies = lam.plies
    return {
        "angle": np.array([p.angle for p in plies], dtype=float),
        "thickness": np.array([p.thickness for p in plies], dtype=float),
        "Q": np.array([p.material.Q() for p in plies]),
        "G": np.array([np.diag(p.material.G_transverse()) for p in plies]),
        "alpha": np.array([p.material.alpha() for p in plies]),
        "beta": np.array([p.material.beta() for p in plies]),
        "density": np.array([p.material.density for p in plies], dtype=float),
    }


def section_properties(lam: Laminate) -> SectionProperties:
    """A, B, D, thermal/moisture resultants, mass and interfaces of a laminate.

    All integrals through the thickness are taken about the reference surface
    (z = 0), so a non-zero ``lam.offset`` produces B ≠ 0 even for a symmetric
    stack, as a solver with an offset reference expects.
    """
    arr = ply_arrays(lam)
    z = interfaces(arr["thickness"], lam.offset)
    zb, zt = z[:-1], z[1:]
    Qbar = rotate_plane_stiffness(arr["Q"], arr["angle"])
    Gbar = rotate_shear_stiffness(arr["G"], arr["angle"])
    w1, w2, w3 = zt - zb, (zt ** 2 - zb ** 2) / 2.0, (zt ** 3 - zb ** 3) / 3.0
    A = np.einsum("k,kij->ij", w1, Qbar)
    B = np.einsum("k,kij->ij", w2, Qbar)
    D = np.einsum("k,kij->ij", w3, Qbar)
    qa = np.einsum("kij,kj->ki", Qbar, expansion_to_unrotated(arr["alpha"], arr["angle"]))
    qb = np.einsum("kij,kj->ki", Qbar, expansion_to_unrotated(arr["beta"], arr["angle"]))
    return SectionProperties(
        thickness=float(w1.sum()),
        areal_mass=float(np.dot(arr["density"], w1)),
        z=z, A=A, B=B, D=D,
        NT=w1 @ qa, MT=w2 @ qa, NH=w1 @ qb, MH=w2 @ qb,
        Qbar=Qbar, Gbar=Gbar,
    )
