"""Sandwich core layers: honeycombs, foams (and end-grain wood, :mod:`shells.wood`)."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import params as P
from .errors import MaterialError
from .layer import _Layer, _fill, _require_positive


@dataclass(frozen=True)
class Core(_Layer):
    """A honeycomb or foam core layer.

    Parameters
    ----------
    G13, G23 : float
        Transverse shear moduli: 13 in the ribbon (L) direction, 23 in the
        transverse (W) direction of a honeycomb; equal for a foam.
    Ez : float, optional
        Through-thickness (flatwise) modulus, used by face wrinkling.
    E1, E2 : float
        In-plane moduli, default 0 (a honeycomb carries no in-plane load).
    G12, nu12 : float
        In-plane shear modulus and Poisson's ratio, default 0 (a foam or end-grain wood core carries some).
    S13, S23 : float, optional
        Core shear strengths in the ribbon and transverse directions.
    Zc, Zt : float, optional
        Flatwise compressive (crushing) and tensile strengths.
    Xt, Xc, Yt, Yc, S12 : float, optional
        In-plane strengths along 1 and 2 and in-plane shear strength (checked by max-stress when given).
    cell_size : float, optional
        Honeycomb cell size (inscribed circle diameter), used by intracell
        dimpling of the adjacent faces.
    """

    G13: float = 0.0
    G23: float = 0.0
    Ez: float | None = None
    E1: float = 0.0
    E2: float = 0.0
    G12: float = 0.0
    nu12: float = 0.0
    S13: float | None = None
    S23: float | None = None
    Zc: float | None = None
    Zt: float | None = None
    Xt: float | None = None
    Xc: float | None = None
    Yt: float | None = None
    Yc: float | None = None
    S12: float | None = None
    cell_size: float | None = None
    kind = "core"

    def Q(self) -> np.ndarray:
        """In-plane stiffness: E1, E2 alone for a honeycomb; with ν12 the plane-stress orthotropic form."""
        if self.nu12 == 0.0 or self.E1 == 0.0:
            return np.diag([self.E1, self.E2, self.G12])
        d = 1.0 - self.nu12 * self.nu12 * self.E2 / self.E1
        return np.array([[self.E1 / d, self.nu12 * self.E2 / d, 0.0], [self.nu12 * self.E2 / d, self.E2 / d, 0.0],
                         [0.0, 0.0, self.G12]])

    def G_transverse(self) -> tuple[float, float]:
        return self.G13, self.G23

    def validate(self) -> "Core":
        self._validate_common()
        _require_positive(self.name, G13=self.G13, G23=self.G23, Ez=self.Ez, S13=self.S13,
                          S23=self.S23, Zc=self.Zc, Zt=self.Zt, cell_size=self.cell_size, Xt=self.Xt, Xc=self.Xc,
                          Yt=self.Yt, Yc=self.Yc, S12=self.S12)
        if self.E1 < 0 or self.E2 < 0 or self.G12 < 0:
            raise MaterialError(f"material '{self.name}': in-plane moduli E1, E2, G12 of a core must not be "
                                "negative")
        if self.nu12 and not (self.E1 > 0 and self.E2 > 0 and abs(self.nu12) < math.sqrt(self.E1 / self.E2)):
            raise MaterialError(f"material '{self.name}': nu12 = {self.nu12:g} needs E1, E2 > 0 and |nu12| below "
                                "sqrt(E1/E2) for a positive-definite in-plane compliance")
        given = [k for k in ("Xt", "Xc", "Yt", "Yc", "S12") if getattr(self, k) is not None]
        if given and len(given) < 5:
            raise MaterialError(f"material '{self.name}': give all in-plane strengths Xt, Xc, Yt, Yc, S12 of the "
                                f"core or none (given: {', '.join(given)})")
        return self

    def params(self) -> np.ndarray:
        vec = self._base_params(P.KIND_CORE)
        _fill(vec, E1=self.E1, E2=self.E2, G12=self.G12, nu12=self.nu12, G13=self.G13, G23=self.G23, Ez=self.Ez,
              core_S13=self.S13, core_S23=self.S23, Zc=self.Zc, Zt=self.Zt, Xt=self.Xt, Xc=self.Xc, Yt=self.Yt,
              Yc=self.Yc, S12=self.S12)
        return vec
