"""Plies, laminates and their section properties (classical lamination theory).

Conventions (docs/conventions.md): ply 1 at the bottom, z along the normal,
ply angles counter-clockwise from the laminate x axis, engineering shear, the
reference surface at z = 0 with the laminate mid-plane at ``offset``.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from .errors import LayupError
from .materials import Material
from .rotation import expansion_to_unrotated, rotate_plane_stiffness, rotate_shear_stiffness


@dataclass(frozen=True)
class Ply:
    """One layer of a stack: a material at an angle with a thickness (length unit of the definition).

    Attributes
    ----------
    wound : bool
        A balanced ±angle layer (filament winding, a ±θ fabric) kept as one homogenised layer: its stiffness
        is the mean of the +angle and −angle stiffnesses over the whole layer (no bending-twist coupling from
        splitting it), and its stresses are recovered for both the +angle and the −angle fibres
        (:attr:`shells.section.Section.rows`).
    angle_field : str or None
        The name of a per-cell angle array of the mesh (degrees): the ply's angle in each cell is
        ``angle_sign`` times its value there (:meth:`Laminate.with_field_angles`); ``angle`` is then unused.
    angle_sign : float
        +1 or −1: a −θ ply turns opposite to a +θ ply of the same field.
    """

    material: Material
    angle: float
    thickness: float
    wound: bool = False
    angle_field: str | None = None
    angle_sign: float = 1.0


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

    @property
    def angle_fields(self) -> tuple[str, ...]:
        """The mesh arrays the ply angles are taken from (empty when every angle is fixed)."""
        return tuple(dict.fromkeys(p.angle_field for p in self.plies if p.angle_field is not None))

    def with_field_angles(self, values: dict[str, float]) -> "Laminate":
        """The laminate with each field ply at ``angle_sign`` × the field's value (degrees) in ``values``."""
        plies = tuple(replace(p, angle=p.angle_sign * float(values[p.angle_field]), angle_field=None, angle_sign=1.0)
                      if p.angle_field is not None else p for p in self.plies)
        return Laminate(self.name, plies, self.offset, self.notation)

    @property
    def rows(self) -> tuple[tuple[int, float], ...]:
        """(ply index, angle) of every recovered ply, bottom to top: one per ply, and for a wound ply two, its
        +angle and −angle fibres (in that order), which share the ply's place through the thickness."""
        out: list[tuple[int, float]] = []
        for k, p in enumerate(self.plies):
            out.append((k, p.angle))
            if p.wound:
                out.append((k, -p.angle))
        return tuple(out)


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
        "wound": np.array([p.wound for p in plies], dtype=bool),
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
    # A wound ply is the mean of its +angle and −angle fibres over its whole thickness (the mean of a value
    # with itself is exact, so other plies are unchanged).
    plus, minus = arr["angle"], np.where(arr["wound"], -arr["angle"], arr["angle"])
    Qp, Qm = rotate_plane_stiffness(arr["Q"], plus), rotate_plane_stiffness(arr["Q"], minus)
    Qbar = 0.5 * (Qp + Qm)
    Gbar = 0.5 * (rotate_shear_stiffness(arr["G"], plus) + rotate_shear_stiffness(arr["G"], minus))
    w1, w2, w3 = zt - zb, (zt ** 2 - zb ** 2) / 2.0, (zt ** 3 - zb ** 3) / 3.0
    A = np.einsum("k,kij->ij", w1, Qbar)
    B = np.einsum("k,kij->ij", w2, Qbar)
    D = np.einsum("k,kij->ij", w3, Qbar)

    def mean_product(free):        # Q̄ ᾱ of both fibre directions, averaged
        return 0.5 * (np.einsum("kij,kj->ki", Qp, expansion_to_unrotated(free, plus))
                      + np.einsum("kij,kj->ki", Qm, expansion_to_unrotated(free, minus)))

    qa, qb = mean_product(arr["alpha"]), mean_product(arr["beta"])
    return SectionProperties(
        thickness=float(w1.sum()),
        areal_mass=float(np.dot(arr["density"], w1)),
        z=z, A=A, B=B, D=D,
        NT=w1 @ qa, MT=w2 @ qa, NH=w1 @ qb, MH=w2 @ qb,
        Qbar=Qbar, Gbar=Gbar,
    )
