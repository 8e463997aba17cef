"""Wood layers: an orthotropic solid with its grain (L), radial (R) and tangential (T) axes.

A wood layer is laid either with its grain in the plane (``grain = "flat"``: plywood veneers, flat-sawn boards
and strips; axes 1 = L at the layer's angle, 2 = T in the plane, 3 = R along the normal) or with its grain along
the normal (``grain = "end"``: end-grain balsa cores; 3 = L, 1 = R at the layer's angle, 2 = T). Flat grain acts
as an orthotropic ply (every ply criterion applies); end grain acts as a sandwich core (core shear on the LR and
LT planes, flatwise compression and tension along the grain, faces wrinkling on its modulus along the grain) that
also has in-plane stiffness and strengths across the grain, checked by max-stress.

End-grain balsa taken as an isotropic layer of modulus E_L overstates its transverse shear stiffness several
times: G = E_L/(2(1 + ν)) against the measured G_LR, G_LT, about a twentieth of E_L (docs/definition.md shows
the size of the error on a bulkhead; tests/test_wood.py checks it).

Values are in the definition's unit system; the Poisson ratio ν_ij is the contraction along j under load along
i (ν_LR, ν_LT, ν_RT). No expansion or swelling coefficients are taken (0).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from .cores import Core
from .errors import MaterialError
from .layer import _Layer, _require_positive

if TYPE_CHECKING:
    from .materials import Orthotropic

GRAINS = ("flat", "end")
#: Definition keys of the wood strengths (positive magnitudes).
STRENGTHS = ("tension_parallel", "compression_parallel", "tension_perpendicular", "compression_perpendicular",
             "shear_parallel", "rolling_shear")


@dataclass(frozen=True)
class Wood(_Layer):
    """An orthotropic solid of wood (see the module notes for the axes of each grain).

    Parameters
    ----------
    grain : {"flat", "end"}
    E_L, E_R, E_T : float
        Moduli along the grain, radial and tangential.
    G_LR, G_LT, G_RT : float
        Shear moduli of the LR, LT and RT planes (G_RT: rolling shear).
    nu_LR, nu_LT, nu_RT : float
        Poisson's ratios.
    tension_parallel, compression_parallel : float, optional
        Strengths along the grain (end grain: the flatwise tension and compression of the core).
    tension_perpendicular, compression_perpendicular : float, optional
        Strengths across the grain (both R and T).
    shear_parallel : float, optional
        Shear strength along the grain (LR and LT planes; end grain: the core shear strength).
    rolling_shear : float, optional
        Shear strength of the RT plane.
    """

    grain: str = "end"
    E_L: float = 0.0
    E_R: float = 0.0
    E_T: float = 0.0
    G_LR: float = 0.0
    G_LT: float = 0.0
    G_RT: float = 0.0
    nu_LR: float = 0.0
    nu_LT: float = 0.0
    nu_RT: float = 0.0
    tension_parallel: float | None = None
    compression_parallel: float | None = None
    tension_perpendicular: float | None = None
    compression_perpendicular: float | None = None
    shear_parallel: float | None = None
    rolling_shear: float | None = None
    kind = "wood"

    @property
    def acts_as(self) -> str:
        """``ply`` (flat grain) or ``core`` (end grain)."""
        return "ply" if self.grain == "flat" else "core"

    @cached_property
    def layer(self) -> "Orthotropic | Core":
        """The equivalent ply (flat grain) or core (end grain) in the layer's axes 1, 2, 3."""
        from .materials import Orthotropic          # shells.materials lists Wood among its kinds

        common = dict(name=self.name, density=self.density, thickness=self.thickness, knockdown=self.knockdown,
                      knockdown_factors=self.knockdown_factors, environment_knockdowns=self.environment_knockdowns,
                      source=self.source, description=self.description)
        if self.grain == "flat":
            return Orthotropic(E1=self.E_L, E2=self.E_T, G12=self.G_LT, nu12=self.nu_LT, G13=self.G_LR,
                               G23=self.G_RT, Xt=self.tension_parallel, Xc=self.compression_parallel,
                               Yt=self.tension_perpendicular, Yc=self.compression_perpendicular,
                               S12=self.shear_parallel, S13=self.shear_parallel, S23=self.rolling_shear, **common)
        return Core(E1=self.E_R, E2=self.E_T, G12=self.G_RT, nu12=self.nu_RT, G13=self.G_LR, G23=self.G_LT,
                    Ez=self.E_L, S13=self.shear_parallel, S23=self.shear_parallel, Zc=self.compression_parallel,
                    Zt=self.tension_parallel, Xt=self.tension_perpendicular, Xc=self.compression_perpendicular,
                    Yt=self.tension_perpendicular, Yc=self.compression_perpendicular, S12=self.rolling_shear,
                    **common)

    def Q(self) -> np.ndarray:
        return self.layer.Q()

    def G_transverse(self) -> tuple[float, float]:
        return self.layer.G_transverse()

    def params(self) -> np.ndarray:
        return self.layer.params()

    def defaults_used(self, stress_unit: str = "") -> dict[str, str]:
        """The defaults a flat-grain layer relies on as a ply (:meth:`shells.materials.Orthotropic.defaults_used`);
        none for end grain."""
        return self.layer.defaults_used(stress_unit) if self.grain == "flat" else {}

    # The attributes a ply's checks read (in-situ strengths, Puck defaults) come from the equivalent layer.
    def __getattr__(self, name: str):
        if name.startswith("_") or name in ("layer", "__dict__"):
            raise AttributeError(name)
        return getattr(self.layer, name)

    def compliance(self) -> np.ndarray:
        """The 3 × 3 normal compliance in (L, R, T) (reciprocity ν_RL/E_R = ν_LR/E_L and alike)."""
        return np.array([[1 / self.E_L, -self.nu_LR / self.E_L, -self.nu_LT / self.E_L],
                         [-self.nu_LR / self.E_L, 1 / self.E_R, -self.nu_RT / self.E_R],
                         [-self.nu_LT / self.E_L, -self.nu_RT / self.E_R, 1 / self.E_T]])

    def validate(self) -> "Wood":
        self._validate_common()
        if self.grain not in GRAINS:
            raise MaterialError(f"material '{self.name}': grain = {self.grain!r}; use \"flat\" (grain in the "
                                "plane, along the layer's angle) or \"end\" (grain along the normal, e.g. a balsa "
                                "core)")
        _require_positive(self.name, E_L=self.E_L, E_R=self.E_R, E_T=self.E_T, G_LR=self.G_LR, G_LT=self.G_LT,
                          G_RT=self.G_RT, **{k: getattr(self, k) for k in STRENGTHS})
        if not np.all(np.linalg.eigvalsh(self.compliance()) > 0):
            raise MaterialError(f"material '{self.name}': the Poisson ratios nu_LR, nu_LT, nu_RT with these moduli "
                                "give a compliance that is not positive definite; check them")
        given = [k for k in ("tension_perpendicular", "compression_perpendicular", "rolling_shear")
                 if getattr(self, k) is not None]
        if self.grain == "end" and given and len(given) < 3:
            raise MaterialError(f"material '{self.name}': give tension_perpendicular, compression_perpendicular "
                                "and rolling_shear together (the in-plane strengths of an end-grain core) or none")
        self.layer.validate()
        return self
