"""Layer materials: orthotropic plies, isotropic layers and sandwich cores.

All values are plain floats in one consistent unit system (the definition's),
converted before a material is built. Axes: 1 along the fibre (or the
reference direction of the layer), 2 in-plane transverse, 3 along the shell
normal. Shear moduli and strains are engineering quantities.

Each class is a frozen dataclass with the same small interface:
``Q()`` (plane-stress reduced stiffness, 3×3, order 1, 2, 12),
``G_transverse()`` ((G13, G23)), ``alpha()`` / ``beta()`` (expansion per unit
temperature / moisture, order 1, 2, 12), ``params()`` (the kernel property
vector, see :mod:`shells.params`) and ``validate()``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import params as P
from . import ply_defaults as defaults
from .errors import MaterialError
from .layer import _Layer, _fill, _require_positive
from .ply_defaults import StrainLimits


@dataclass(frozen=True)
class Orthotropic(_Layer):
    """A unidirectional or woven ply characterised in its material axes.

    Parameters
    ----------
    E1, E2, G12, nu12 : float
        In-plane moduli (stress) and major Poisson's ratio (ν12, strain in 2
        over strain in 1 under load in 1).
    G13, G23 : float, optional
        Transverse shear moduli; G13 defaults to G12 and G23 to
        E2 / (2 (1 + nu23)) when ``nu23`` is given, else to G12 (common practice).
    Xt, Xc, Yt, Yc, S12, S13, S23 : float, optional
        Strengths, all positive (compressive ones as magnitudes).
    strain_limits : StrainLimits
        Strain limits; those not given default to strength / modulus.
    alpha1, alpha2, beta1, beta2 : float
        Expansion per unit temperature / moisture change along 1 and 2.
    fibre : {"carbon", "glass"} or None
        Fibre family, for the default Puck inclinations (:data:`PUCK_INCLINATIONS`).
    p_tpl, p_cpl : float, optional
        Puck's p⊥∥⁺, p⊥∥⁻; default by fibre family.
    G_Ic, G_IIc : float, optional
        Mode I and mode II fracture toughness (force/length), for the in-situ strengths of thin plies.
    insitu : bool
        LaRC03 with in-situ transverse tensile and shear strengths, by ply position
        (:mod:`shells.insitu`).
    """

    E1: float = 0.0
    E2: float = 0.0
    G12: float = 0.0
    nu12: float = 0.0
    G13: float | None = None
    G23: float | None = None
    nu23: float | None = None
    alpha1: float = 0.0
    alpha2: float = 0.0
    beta1: float = 0.0
    beta2: float = 0.0
    Xt: float | None = None
    Xc: float | None = None
    Yt: float | None = None
    Yc: float | None = None
    S12: float | None = None
    S13: float | None = None
    S23: float | None = None
    strain_limits: StrainLimits = StrainLimits()
    ilss: float | None = None
    F12star: float = -0.5
    fibre: str | None = None
    p_tpl: float | None = None
    p_cpl: float | None = None
    alpha0_deg: float = 53.0
    G_Ic: float | None = None
    G_IIc: float | None = None
    insitu: bool = False
    kind = "ply"

    def __post_init__(self):
        if isinstance(self.strain_limits, dict):      # from JSON metadata (asdict)
            object.__setattr__(self, "strain_limits", StrainLimits(**self.strain_limits))

    @property
    def nu21(self) -> float:
        return self.nu12 * self.E2 / self.E1

    @property
    def g13(self) -> float:
        return self.G12 if self.G13 is None else self.G13

    @property
    def g23(self) -> float:
        if self.G23 is not None:
            return self.G23
        if self.nu23 is not None:
            return self.E2 / (2.0 * (1.0 + self.nu23))
        return self.G12

    def strain_limit_values(self) -> tuple[dict[str, float | None], tuple[str, ...]]:
        """The strain limits in use (given, else strength / modulus) and the names of those derived."""
        return defaults.strain_limit_values(self)

    def puck_inclinations(self) -> tuple[float, float]:
        """(p⊥∥⁺, p⊥∥⁻): as given, else by fibre family, else the glass values."""
        return defaults.puck_inclinations(self)

    def transverse_shear_strength(self) -> float | None:
        """S_T of Hashin's matrix modes: S23 when given, else from the fracture plane (Dávila et al. 2005)."""
        return self.S23 if self.S23 is not None else defaults.fracture_plane_shear_strength(self.Yc, self.alpha0_deg)

    def defaults_used(self, stress_unit: str = "") -> dict[str, str]:
        """Criterion name → a one-line note on each default this material relies on for that criterion
        (stresses labelled with ``stress_unit``)."""
        return defaults.defaults_used(self, stress_unit)

    def Q(self) -> np.ndarray:
        """Plane-stress reduced stiffness in material axes, order (1, 2, 12)."""
        d = 1.0 - self.nu12 * self.nu21
        q11, q22 = self.E1 / d, self.E2 / d
        q12 = self.nu12 * self.E2 / d
        return np.array([[q11, q12, 0.0], [q12, q22, 0.0], [0.0, 0.0, self.G12]])

    def G_transverse(self) -> tuple[float, float]:
        return self.g13, self.g23

    def alpha(self) -> np.ndarray:
        return np.array([self.alpha1, self.alpha2, 0.0])

    def beta(self) -> np.ndarray:
        return np.array([self.beta1, self.beta2, 0.0])

    def validate(self) -> "Orthotropic":
        self._validate_common()
        _require_positive(self.name, E1=self.E1, E2=self.E2, G12=self.G12, G13=self.G13, G23=self.G23)
        limit = math.sqrt(self.E1 / self.E2)
        if not abs(self.nu12) < limit:
            raise MaterialError(
                f"material '{self.name}': |nu12| = {abs(self.nu12):g} must be below sqrt(E1/E2) = {limit:g} "
                "for a positive-definite compliance; check nu12 and the moduli")
        if self.nu23 is not None:
            # Transversely isotropic 3-D compliance (ν13 = ν12, E3 = E2) is positive definite when
            # (1 + ν23)(1 − ν23 − 2 ν12 ν21) > 0; ν23 > −1 also keeps G23 = E2/(2(1 + ν23)) positive.
            top = 1.0 - 2.0 * self.nu12 * self.nu21
            if not -1.0 < self.nu23 < top:
                raise MaterialError(
                    f"material '{self.name}': nu23 = {self.nu23:g} must lie in (-1, {top:g}) (1 - 2·nu12·nu21) "
                    "for a positive-definite 3-D compliance and G23 > 0; check nu23")
        _require_positive(self.name, Xt=self.Xt, Xc=self.Xc, Yt=self.Yt, Yc=self.Yc, S12=self.S12,
                          S13=self.S13, S23=self.S23, ilss=self.ilss, G_Ic=self.G_Ic, G_IIc=self.G_IIc)
        _require_positive(self.name, **{f"strain_limits.{k}": v for k, v in vars(self.strain_limits).items()})
        if not -1.0 <= self.F12star <= 1.0:
            raise MaterialError(f"material '{self.name}': F12star = {self.F12star} must lie in [-1, 1]")
        if self.fibre is not None and self.fibre not in defaults.PUCK_INCLINATIONS:
            raise MaterialError(f"material '{self.name}': fibre = {self.fibre!r} is not a known family; use "
                                f"{' or '.join(defaults.PUCK_INCLINATIONS)}, or leave it out and give p_tpl "
                                "and p_cpl")
        _require_positive(self.name, p_tpl=self.p_tpl, p_cpl=self.p_cpl)
        return self

    def params(self) -> np.ndarray:
        """Property vector; the in-situ strengths are those of a thick embedded ply until the section builder
        sets them by ply position (:func:`shells.insitu.insitu_strengths`)."""
        vec = self._base_params(P.KIND_PLY)
        limits, _ = self.strain_limit_values()
        p_tpl, p_cpl = self.puck_inclinations()
        _fill(vec, E1=self.E1, E2=self.E2, G12=self.G12, nu12=self.nu12, G13=self.g13, G23=self.g23,
              Xt=self.Xt, Xc=self.Xc, Yt=self.Yt, Yc=self.Yc, S12=self.S12, S13=self.S13, S23=self.S23,
              **{f"strain_{k}": v for k, v in limits.items()},
              F12star=self.F12star, p_tpl=p_tpl, p_cpl=p_cpl,
              alpha0=math.radians(self.alpha0_deg), ilss=self.ilss, S_T=self.transverse_shear_strength())
        # In-situ strengths of a thick embedded ply (Camanho et al. 2006; Davila, Camanho & Rose 2005).
        scale_t, scale_s = (defaults.THICK_TENSION, defaults.THICK_SHEAR) if self.insitu else (1.0, 1.0)
        _fill(vec, YT_is=None if self.Yt is None else scale_t * self.Yt,
              S12_is=None if self.S12 is None else scale_s * self.S12)
        return vec


@dataclass(frozen=True)
class Isotropic(_Layer):
    """An isotropic layer: metal sheet, adhesive film (wood is orthotropic: :class:`shells.wood.Wood`).

    Parameters
    ----------
    E, nu : float
        Young's modulus and Poisson's ratio (−1 < nu < 0.5).
    yield_strength : float, optional
        Allowable equivalent (von Mises) stress.
    Xt, Xc, S12 : float, optional
        Direct and shear allowables for the max-stress check.
    cte, cme : float
        Expansion per unit temperature / moisture change (the definition keys
        are ``alpha`` and ``beta``).
    """

    E: float = 0.0
    nu: float = 0.0
    cte: float = 0.0
    cme: float = 0.0
    yield_strength: float | None = None
    Xt: float | None = None
    Xc: float | None = None
    S12: float | None = None
    ilss: float | None = None
    kind = "isotropic"

    @property
    def G(self) -> float:
        return self.E / (2.0 * (1.0 + self.nu))

    def Q(self) -> np.ndarray:
        d = 1.0 - self.nu ** 2
        return np.array([[self.E / d, self.nu * self.E / d, 0.0],
                         [self.nu * self.E / d, self.E / d, 0.0],
                         [0.0, 0.0, self.G]])

    def G_transverse(self) -> tuple[float, float]:
        return self.G, self.G

    def alpha(self) -> np.ndarray:
        return np.array([self.cte, self.cte, 0.0])

    def beta(self) -> np.ndarray:
        return np.array([self.cme, self.cme, 0.0])

    def validate(self) -> "Isotropic":
        self._validate_common()
        _require_positive(self.name, E=self.E, yield_strength=self.yield_strength, Xt=self.Xt,
                          Xc=self.Xc, S12=self.S12, ilss=self.ilss)
        if not -1.0 < self.nu < 0.5:
            raise MaterialError(f"material '{self.name}': nu = {self.nu} must lie in (-1, 0.5)")
        return self

    def params(self) -> np.ndarray:
        vec = self._base_params(P.KIND_ISOTROPIC)
        _fill(vec, E1=self.E, E2=self.E, G12=self.G, nu12=self.nu, G13=self.G, G23=self.G,
              yield_strength=self.yield_strength, Xt=self.Xt, Xc=self.Xc, Yt=self.Xt, Yc=self.Xc,
              S12=self.S12, ilss=self.ilss)
        return vec


def is_core(material) -> bool:
    """Whether a layer acts as a sandwich core (a core, or wood with its grain along the normal)."""
    return material.kind == "core" or getattr(material, "acts_as", None) == "core"


from .cores import Core  # noqa: E402
from .wood import Wood  # noqa: E402  (a wood layer maps onto an orthotropic ply or a core)

Material = Orthotropic | Isotropic | Core | Wood
