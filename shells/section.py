"""A laminate's complete section: stiffness, transverse shear, constants, flags
and the per-ply data the recovery kernels read.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import params as P
from .defaults import SHEAR_FACTOR, TRANSVERSE_SHEAR, WRINKLING_COEFFICIENT
from .errors import LayupError
from .engineering import engineering_constants, flags, membrane_constants
from .laminate import Laminate, Ply, SectionProperties, section_properties
from .sandwich import dimpling_stress, wrinkling_stress
from .shear import PLY_POINTS, equilibrium_shear_stiffness, factor_shear_stiffness, shear_distribution


#: Transverse shear methods: how H is computed and how τ13, τ23 are recovered.
SHEAR_METHODS = ("equilibrium", "factor", "field")


@dataclass(frozen=True)
class Section:
    """Everything known about one laminate as a shell section, in laminate axes.

    Attributes
    ----------
    laminate : Laminate
    props : SectionProperties
        z, A, B, D, NT, MT, NH, MH, Q̄ and Ḡ of every ply.
    H : ndarray (2, 2)
        Transverse shear stiffness, order (xz, yz).
    shear_method : str
        ``"equilibrium"``, ``"factor"`` or ``"field"`` (H as ``"equilibrium"``).
    shear_F : ndarray (nply, 3, 2, 2)
        (τxz, τyz) = F · (Qx, Qy) at the bottom, middle and top of every ply.
    ply_params : ndarray (nply, NPARAM)
        Kernel property vectors (materials plus face allowables), every allowable multiplied by the
        ply material's knockdown (:data:`shells.params.ALLOWABLES`).
    """

    laminate: Laminate
    props: SectionProperties
    H: np.ndarray
    shear_method: str
    shear_F: np.ndarray = field(repr=False)
    ply_params: np.ndarray = field(repr=False)

    @property
    def n_plies(self) -> int:
        return len(self.laminate.plies)

    def summary(self) -> dict:
        """Plain-data summary (lists and floats) of the section, laminate axes, ply order bottom to top."""
        sp = self.props
        return {
            "thickness": sp.thickness,
            "areal_mass": sp.areal_mass,
            "offset": self.laminate.offset,
            "plies": [{"material": p.material.name, "angle": p.angle, "thickness": p.thickness}
                      for p in self.laminate.plies],
            "z": sp.z.tolist(),
            "A": sp.A.tolist(), "B": sp.B.tolist(), "D": sp.D.tolist(),
            "H": self.H.tolist(),
            "shear_method": self.shear_method,
            "NT": sp.NT.tolist(), "MT": sp.MT.tolist(),
            "NH": sp.NH.tolist(), "MH": sp.MH.tolist(),
            **engineering_constants(sp),
            "flags": flags(self.laminate, sp),
        }


def _faces(plies: tuple[Ply, ...]) -> list[tuple[list[int], int]]:
    """Runs of non-core plies that touch a core: (ply indices of the face, index of the core)."""
    is_core = [p.material.kind == "core" for p in plies]
    out = []
    for c, core in enumerate(is_core):
        if not core:
            continue
        for step in (-1, 1):
            run, k = [], c + step
            while 0 <= k < len(plies) and not is_core[k]:
                run.append(k)
                k += step
            if run:
                out.append((sorted(run), c))
    return out


def _face_allowables(lam: Laminate, params: np.ndarray, k_wrinkle: float) -> None:
    """Set wrinkling and dimpling allowables on the plies of every sandwich face (in place, own array).

    Face modulus: the smaller of the face sub-laminate's membrane Ex, Ey; core
    moduli: Ez and the smaller of G13, G23 (conservative choices, common practice).
    """
    for run, c in _faces(lam.plies):
        core = lam.plies[c].material
        face = Laminate(f"{lam.name}-face", tuple(lam.plies[k] for k in run))
        mc = membrane_constants(section_properties(face))
        ef = min(mc["Ex"], mc["Ey"])
        if getattr(core, "Ez", None):
            params[run, P.WRINKLING] = wrinkling_stress(ef, core.Ez, min(core.G13, core.G23), k_wrinkle)
        if getattr(core, "cell_size", None):
            params[run, P.DIMPLING] = dimpling_stress(ef, mc["nuxy"], face.thickness, core.cell_size)


def build_section(lam: Laminate, shear_method: str = TRANSVERSE_SHEAR, shear_factor: float = SHEAR_FACTOR,
                  wrinkling_coefficient: float = WRINKLING_COEFFICIENT) -> Section:
    """Compute a :class:`Section` from a laminate.

    Parameters
    ----------
    lam : Laminate
    shear_method : {"equilibrium", "factor", "field"}
        How H is obtained: energy-consistent (Rolfes & Rohwer 1997) or k·ΣḠt; ``"field"`` (transverse shear
        recovered from the resultant field, :mod:`shells.field_shear`) takes H as ``"equilibrium"``.
    shear_factor : float
        k of the ``"factor"`` method.
    wrinkling_coefficient : float
        k of the face wrinkling allowable k·(Ef·Ec·Gc)^(1/3).
    """
    sp = section_properties(lam)
    eig = np.linalg.eigvalsh(sp.ABD)
    if not eig.min() > 1e-12 * eig.max():
        raise LayupError(f"laminate '{lam.name}' has a singular stiffness matrix (a core or zero-stiffness layers "
                         "only?); add load-carrying plies")
    if shear_method not in SHEAR_METHODS:
        raise ValueError(f"shear_method {shear_method!r}; use one of {', '.join(SHEAR_METHODS)}")
    if shear_method == "factor":
        H = factor_shear_stiffness(sp, shear_factor)
    else:
        H = equilibrium_shear_stiffness(sp)
    params = np.array([p.material.params() for p in lam.plies])
    _face_allowables(lam, params, wrinkling_coefficient)
    params = P.knocked_down(params, np.array([p.material.knockdown for p in lam.plies]))
    return Section(lam, sp, H, shear_method, shear_distribution(sp, PLY_POINTS), params)
