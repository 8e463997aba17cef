"""A laminate's complete section: stiffness, transverse shear, constants, flags
and the per-ply data the recovery kernels read.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import params as P
from .defaults import SHEAR_FACTOR, TRANSVERSE_SHEAR, WRINKLING_COEFFICIENT
from .errors import LayupError
from .engineering import engineering_constants, flags
from .insitu import insitu_strengths
from .laminate import Laminate, Ply, SectionProperties, section_properties
from .materials import is_core as acts_as_core
from .sandwich import dimpling_stress, weakest_membrane_modulus, wrinkling_stress
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
    faces : tuple of tuple of int
        Sandwich faces: the ply indices (bottom to top) of each run of non-core plies next to a core.
    face_params : ndarray (nface, NPARAM)
        Property vector of each face for the face-level checks (wrinkling, dimpling): the face's first ply
        with the face allowables, knocked down by the smallest knockdown of the face's plies.
    raw_params, raw_face_params : ndarray
        ``ply_params`` and ``face_params`` before any knockdown (:meth:`params_for` knocks them down for an
        environment).
    """

    laminate: Laminate
    props: SectionProperties
    H: np.ndarray
    shear_method: str
    shear_F: np.ndarray = field(repr=False)
    ply_params: np.ndarray = field(repr=False)
    faces: tuple[tuple[int, ...], ...] = ()
    face_params: np.ndarray = field(default_factory=lambda: np.zeros((0, P.NPARAM)), repr=False)
    raw_params: np.ndarray | None = field(default=None, repr=False)
    raw_face_params: np.ndarray | None = field(default=None, repr=False)

    @property
    def n_plies(self) -> int:
        """Plies of the laminate (a wound ±angle ply counts once)."""
        return len(self.laminate.plies)

    @property
    def rows(self) -> tuple[tuple[int, float], ...]:
        """(ply index, angle) of every recovered ply (:attr:`shells.laminate.Laminate.rows`): results are given
        per row; a wound ply has two, its +angle and −angle fibres."""
        return self.laminate.rows

    @property
    def n_rows(self) -> int:
        return len(self.rows)

    def params_for(self, environment: str | None) -> tuple[np.ndarray, np.ndarray]:
        """(ply_params, face_params) with each ply's knockdown for ``environment`` (None: the default one).

        A face takes the smallest knockdown of its plies. Raises :class:`shells.errors.MaterialError` when a
        material's environment table lacks ``environment``.
        """
        if environment is None or self.raw_params is None:
            return self.ply_params, self.face_params
        return _knock(self.laminate, self.raw_params, self.raw_face_params, self.faces, environment)

    def summary(self) -> dict:
        """Plain-data summary (lists and floats) of the section, laminate axes, ply order bottom to top."""
        sp = self.props
        return {
            "thickness": sp.thickness,
            "areal_mass": sp.areal_mass,
            "offset": self.laminate.offset,
            "plies": [{"material": p.material.name, "angle": p.angle, "thickness": p.thickness,
                       **({"wound": True} if p.wound else {})} for p in self.laminate.plies],
            "z": sp.z.tolist(),
            "A": sp.A.tolist(), "B": sp.B.tolist(), "D": sp.D.tolist(),
            "H": self.H.tolist(),
            "shear_method": self.shear_method,
            "NT": sp.NT.tolist(), "MT": sp.MT.tolist(),
            "NH": sp.NH.tolist(), "MH": sp.MH.tolist(),
            **engineering_constants(sp),
            "flags": flags(self.laminate, sp),
        }


def _faces(plies: tuple[Ply, ...]) -> dict[tuple[int, ...], list[int]]:
    """Runs of non-core plies that touch a core: ply indices of the face → indices of the cores it touches."""
    is_core = [acts_as_core(p.material) for p in plies]
    out: dict[tuple[int, ...], list[int]] = {}
    for c, core in enumerate(is_core):
        if not core:
            continue
        for step in (-1, 1):
            run, k = [], c + step
            while 0 <= k < len(plies) and not is_core[k]:
                run.append(k)
                k += step
            if run:
                out.setdefault(tuple(sorted(run)), []).append(c)
    return out


def _face_allowables(lam: Laminate, params: np.ndarray,
                     k_wrinkle: float) -> tuple[tuple[tuple[int, ...], ...], np.ndarray]:
    """Faces and their allowables; also sets them on the face plies' vectors (in place, own array).

    Face modulus: the smallest in-plane modulus of the face sub-laminate over all directions (and its Poisson
    ratio there), so the allowable does not depend on the laminate axes; core moduli: Ez and the smaller of
    G13, G23 (conservative choices, common practice). A face touching two cores takes the smaller allowables.
    """
    faces = _faces(lam.plies)
    face_params = np.zeros((len(faces), P.NPARAM))
    for f, (run, cores) in enumerate(faces.items()):
        face = Laminate(f"{lam.name}-face", tuple(lam.plies[k] for k in run))
        ef, nuf = weakest_membrane_modulus(section_properties(face).A, face.thickness)
        face_params[f] = params[run[0]]
        face_params[f, [P.WRINKLING, P.DIMPLING]] = np.nan
        for c in cores:
            core = lam.plies[c].material
            if getattr(core, "Ez", None):
                face_params[f, P.WRINKLING] = np.fmin(face_params[f, P.WRINKLING], wrinkling_stress(
                    ef, core.Ez, min(core.G13, core.G23), k_wrinkle))
            if getattr(core, "cell_size", None):
                face_params[f, P.DIMPLING] = np.fmin(face_params[f, P.DIMPLING], dimpling_stress(
                    ef, nuf, face.thickness, core.cell_size))
        params[list(run), P.WRINKLING] = face_params[f, P.WRINKLING]
        params[list(run), P.DIMPLING] = face_params[f, P.DIMPLING]
    return tuple(faces), face_params


def _regular(ABD: np.ndarray) -> bool:
    """Whether a stiffness matrix is numerically regular (smallest eigenvalue above 1e-12 of the largest)."""
    eig = np.linalg.eigvalsh(ABD)
    return bool(eig.min() > 1e-12 * eig.max())


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
    if not _regular(sp.ABD):
        if lam.offset != 0.0 and _regular(section_properties(lam.with_offset(0.0)).ABD):
            raise LayupError(
                f"laminate '{lam.name}': with the reference surface {abs(lam.offset):g} from the mid-plane "
                f"({abs(lam.offset) / lam.thickness:.4g} laminate thicknesses) the stiffness matrix about it is "
                "numerically singular (the bending stiffness is lost to round-off next to offset² times the "
                "membrane stiffness); check the offset and its unit")
        raise LayupError(f"laminate '{lam.name}' has a singular stiffness matrix (a core or zero-stiffness layers "
                         "only?); add load-carrying plies")
    if shear_method not in SHEAR_METHODS:
        raise ValueError(f"shear_method {shear_method!r}; use one of {', '.join(SHEAR_METHODS)}")
    if shear_method == "factor":
        H = factor_shear_stiffness(sp, shear_factor)
    else:
        H = equilibrium_shear_stiffness(sp)
    params = np.array([p.material.params() for p in lam.plies])
    for k, (yt, s12) in insitu_strengths(lam.plies).items():
        params[k, [P.YT_IS, P.S12_IS]] = yt, s12
    faces, face_params = _face_allowables(lam, params, wrinkling_coefficient)
    knocked, knocked_faces = _knock(lam, params, face_params, faces, None)
    return Section(lam, sp, H, shear_method, shear_distribution(sp, PLY_POINTS), knocked, faces, knocked_faces,
                   params, face_params)


def _knock(lam: Laminate, params: np.ndarray, face_params: np.ndarray, faces, environment: str | None):
    """Ply and face vectors with every allowable multiplied by the ply's knockdown in ``environment``."""
    knockdown = np.array([p.material.knockdown_for(environment) for p in lam.plies])
    return (P.knocked_down(params, knockdown),
            P.knocked_down(face_params, np.array([knockdown[list(run)].min() for run in faces])))
