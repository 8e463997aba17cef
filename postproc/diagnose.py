"""Diagnosis of a failed comparison: which convention error explains the discrepancy, zone by zone.

Each hypothesis is a small declarative class in the one explicit list
:data:`HYPOTHESES`: a ``name``, a plain-words ``explanation``, the ``fix`` (the
definition setting to change) and one method ``apply(zone) -> list of Variant``
that re-recovers our side under the error, or transforms the solver's data to
undo it. :func:`diagnose_zone` measures the discrepancy left by every variant and
reports, best first, the hypotheses that bring the zone within tolerance.
To add a hypothesis: write its class, add it to :data:`HYPOTHESES`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from shells.laminate import Laminate, Ply
from shells.recovery_tables import build_tables
from shells.section import Section, build_section

from .compare import element_to_material, material_to_element, max_discrepancy, reference_values


@dataclass(frozen=True)
class ZoneData:
    """Everything a hypothesis needs about one zone (its cells share one section).

    Attributes
    ----------
    name : str
    section : Section
    phi : (n,) material angle of each cell, degrees
    R : (ncase, n, 8) resultants in the element frame; dT (ncase, n); dM, pres (ncase,)
    ours, solver : (ncase, n, nply, 3, 5) material axes (postproc.compare), NaN where not given
    scale : (nply, 5) value scales of the base comparison
    quantity : "stress" or "strain"
    axes : the axes the solver data were declared in ("material" or "element")
    case_names : tuple of str
    twist_sign, ply_scale, ply_order, shear :
        The current ``[resultants] twist_sign`` and ``[solver_plies]`` scale, ply_order and shear (fix texts).
    """

    name: str
    section: Section
    phi: np.ndarray
    R: np.ndarray
    dT: np.ndarray
    dM: np.ndarray
    pres: np.ndarray
    ours: np.ndarray
    solver: np.ndarray
    scale: np.ndarray
    quantity: str = "stress"
    axes: str = "material"
    case_names: tuple = ()
    twist_sign: float = 1.0
    ply_scale: float = 1.0
    ply_order: str = "bottom-up"
    shear: str = "engineering"

    def recover(self, section: Section | None = None, phi=None, R=None, dT=None) -> np.ndarray:
        """Our recovery of the zone with some inputs replaced (same shape as ``ours``)."""
        sec = self.section if section is None else section
        n = self.phi.size
        return reference_values(build_tables([sec]), np.zeros(n, np.int64), self.phi if phi is None else phi,
                                self.R if R is None else R, self.dT if dT is None else dT, self.dM, self.pres,
                                self.quantity)

    def ply_angles(self) -> np.ndarray:
        """(n, nply) angle from element x to each ply's 1 axis (θ + φ), degrees."""
        theta = np.array([p.angle for p in self.section.laminate.plies])
        return self.phi[:, None] + theta[None, :]

    def with_plies(self, plies) -> Section:
        lam = self.section.laminate
        return build_section(Laminate(lam.name, tuple(plies), lam.offset), self.section.shear_method)

    def residual(self, ours: np.ndarray, solver: np.ndarray) -> float:
        return max_discrepancy(ours, solver, np.broadcast_to(self.scale, ours.shape[1:3] + (5,)))


@dataclass(frozen=True)
class Variant:
    """One way a hypothesis may hold: our side and the solver's side to compare, and the fix in words."""

    fix: str
    ours: np.ndarray
    solver: np.ndarray


class Hypothesis:
    """Base of the hypotheses (declarative; never instantiated)."""

    name = ""
    explanation = ""
    fix = ""

    @staticmethod
    def apply(z: ZoneData) -> list[Variant]:
        raise NotImplementedError


class AngleSign(Hypothesis):
    name = "ply-angle-sign"
    explanation = "the solver's ply angles have the opposite sign (measured clockwise, or θ written as −θ)"
    fix = "negate the ply angles given to the solver, or those of laminate '{laminate}' in [laminates]"

    @staticmethod
    def apply(z):
        sec = z.with_plies(Ply(p.material, -p.angle, p.thickness) for p in z.section.laminate.plies)
        return [Variant(AngleSign.fix, z.recover(section=sec), z.solver)]


class StackReversed(Hypothesis):
    name = "stacking-order"
    explanation = "the solver numbers the plies from the top (its ply 1 is our top ply)"
    fix = 'set [solver_plies] ply_order = "{order}"'

    @staticmethod
    def apply(z):
        order = "bottom-up" if z.ply_order == "top-down" else "top-down"
        return [Variant(StackReversed.fix.replace("{order}", order), z.ours, z.solver[:, :, ::-1])]


class Axes(Hypothesis):
    name = "material-vs-element-axes"
    explanation = "the solver's ply values are in the other axes than declared (element frame vs ply material axes)"
    fix = 'set [solver_plies] axes = "{other}"'

    @staticmethod
    def apply(z):
        ang = z.ply_angles()[None, :, :, None]
        if z.axes == "material":
            solver, other = element_to_material(z.solver, ang, z.quantity), "element"
        else:
            solver, other = material_to_element(z.solver, ang, z.quantity), "material"
        return [Variant(Axes.fix.replace("{other}", other), z.ours, solver)]


class ReferenceShift(Hypothesis):
    name = "zero-degree-reference"
    explanation = "the solver's 0° direction is 90° away from the definition's (its x is our y)"
    fix = ("turn the orientation of zone '{zone}' by {turn}° about the normal (e.g. the vector to the other "
           "in-plane axis)")

    @staticmethod
    def apply(z):
        return [Variant(ReferenceShift.fix.replace("{turn}", f"{t:+d}"), z.recover(phi=z.phi + t), z.solver)
                for t in (90, -90)]


class ShearStrain(Hypothesis):
    name = "shear-strain-convention"
    explanation = ("the solver's shear strains are tensor strains (ε12 = γ12/2) where engineering γ was declared, "
                   "or the reverse")
    fix = 'set [solver_plies] shear = "{other}"'

    @staticmethod
    def apply(z):
        if z.quantity != "strain":
            return []
        f, other = (0.5, "engineering") if z.shear == "tensor" else (2.0, "tensor")
        s = z.solver.copy()
        s[..., 2:] *= f
        return [Variant(ShearStrain.fix.replace("{other}", other), z.ours, s)]


class TwistSign(Hypothesis):
    name = "twisting-moment-sign"
    explanation = "the solver's twisting moment Mxy has the other sign"
    fix = "set [resultants] twist_sign = {sign}"

    @staticmethod
    def apply(z):
        R = z.R.copy()
        R[..., 5] *= -1.0
        return [Variant(TwistSign.fix.replace("{sign}", f"{-int(z.twist_sign)}"), z.recover(R=R), z.solver)]


class TransverseSwap(Hypothesis):
    name = "transverse-shear-swapped"
    explanation = "the two transverse shear components are swapped (13 ↔ 23 in the ply output, or Qx ↔ Qy)"
    fix = "swap the two transverse shear names in {where}"

    @staticmethod
    def apply(z):
        if not np.isfinite(z.solver[..., 3:]).any():
            return []
        R = z.R.copy()
        R[..., [6, 7]] = R[..., [7, 6]]
        return [Variant(TransverseSwap.fix.replace("{where}", "[solver_plies] components"), z.ours,
                        z.solver[..., [0, 1, 2, 4, 3]]),
                Variant(TransverseSwap.fix.replace("{where}", "[fields] (Qx, Qy order)"), z.recover(R=R), z.solver)]


class PointsSwapped(Hypothesis):
    name = "top-bottom-swapped"
    explanation = "the solver's top and bottom points of each ply are swapped"
    fix = "swap bottom and top in [solver_plies] points"

    @staticmethod
    def apply(z):
        return [Variant(PointsSwapped.fix, z.ours, z.solver[:, :, :, ::-1])]


class Thermal(Hypothesis):
    name = "thermal-residual"
    explanation = ("thermal residual stresses are in one side and not the other: the solver used another "
                   "temperature change than the definition")
    fix = "{what}"

    @staticmethod
    def apply(z):
        unit = z.recover(R=np.zeros_like(z.R), dT=np.ones_like(z.dT)) - z.recover(R=np.zeros_like(z.R),
                                                                                  dT=np.zeros_like(z.dT))
        d = (z.solver - z.ours) / z.scale[None, None, :, None, :]
        u = unit / z.scale[None, None, :, None, :]
        ok = np.isfinite(d) & np.isfinite(u)
        ncase = z.R.shape[0]
        t = np.zeros(ncase)
        for j in range(ncase):
            uu = np.sum(np.where(ok[j], u[j] ** 2, 0.0))
            t[j] = np.sum(np.where(ok[j], u[j] * d[j], 0.0)) / uu if uu > 0 else 0.0
        if not np.any(t):
            return []
        words = []
        for j in np.flatnonzero(np.abs(t) > 1e-6 * max(1.0, float(np.abs(t).max()))):
            name = z.case_names[j] if j < len(z.case_names) else str(j)
            used = float(np.mean(z.dT[j])) + t[j]
            words.append(f"[cases.{name}] delta_T = {used:.4g} (the solver's temperature change)")
        return [Variant("set " + "; ".join(words), z.ours + t[:, None, None, None, None] * unit, z.solver)]


#: Unit factors tried, and what they are (value in the definition's units = solver value / factor).
UNIT_FACTORS = ((1e3, "1e3"), (1e6, "1e6"), (1e9, "1e9"), (6894.757, "psi → Pa"), (145.0377, "MPa → psi"),
                (175.1268, "lbf/in → N/m"), (0.1751268, "lbf/in → N/mm"), (100.0, "per cent strain"))


class UnitFactor(Hypothesis):
    name = "unit-factor"
    explanation = "one side is in other units: the solver's values differ from ours by a constant unit factor"
    fix = "set [solver_plies] scale = {scale:.7g} ({what}), or fix the [resultants] force_scale / length_scale"

    @staticmethod
    def apply(z):
        out = []
        for f, what in UNIT_FACTORS:
            for g, label in ((f, what), (1.0 / f, f"1/({what})")):
                out.append(Variant(UnitFactor.fix.format(scale=z.ply_scale / g, what=label), z.ours, z.solver / g))
        return out


class OffsetIgnored(Hypothesis):
    name = "reference-offset"
    explanation = "the solver ignored the reference-surface offset (its resultants are about the mid-plane)"
    fix = "give the solver the offset of zone '{zone}', or set offset = 0 for it in [[zones]] / [laminates]"

    @staticmethod
    def apply(z):
        lam = z.section.laminate
        if lam.offset == 0:
            return []
        sec = build_section(lam.with_offset(0.0), z.section.shear_method)
        return [Variant(OffsetIgnored.fix, z.recover(section=sec), z.solver)]


#: The registry. Order breaks ties between hypotheses that explain a zone equally well.
HYPOTHESES = (AngleSign, StackReversed, Axes, ReferenceShift, ShearStrain, TwistSign, TransverseSwap, PointsSwapped,
              Thermal, UnitFactor, OffsetIgnored)


def _fix_text(text: str, z: ZoneData) -> str:
    return text.replace("{zone}", z.name).replace("{laminate}", z.section.laminate.name)


def diagnose_zone(z: ZoneData, tolerance: float) -> dict:
    """Test every hypothesis on a zone.

    Returns
    -------
    dict
        ``zone``, ``discrepancy`` (before), ``explained`` (hypotheses within tolerance, best first: ``name``,
        ``explanation``, ``fix``, ``residual``, ``removed`` (fraction of the discrepancy removed)) and ``best``
        (the best hypothesis even when none is within tolerance, or None).
    """
    base = z.residual(z.ours, z.solver)
    found = []
    for rank, h in enumerate(HYPOTHESES):
        best = None
        for v in h.apply(z):
            r = z.residual(v.ours, v.solver)
            if best is None or r < best[0]:
                best = (r, v)
        if best is not None:
            r, v = best
            found.append({"name": h.name, "explanation": h.explanation, "fix": _fix_text(v.fix, z),
                          "residual": r, "removed": (1.0 - r / base) if base > 0 else 0.0, "_rank": rank})
    found.sort(key=lambda f: (f["residual"] > tolerance, f["residual"], f["_rank"]))
    for f in found:
        f.pop("_rank")
    explained = [f for f in found if f["residual"] <= tolerance]
    top = found[0] if found and found[0]["residual"] < base else None
    return {"zone": z.name, "discrepancy": base, "explained": explained, "best": top}


def diagnose(zones, tolerance: float) -> list[dict]:
    """:func:`diagnose_zone` on every zone that fails the tolerance (the others are left out)."""
    return [diagnose_zone(z, tolerance) for z in zones if z.residual(z.ours, z.solver) > tolerance]


__all__ = ["HYPOTHESES", "Hypothesis", "Variant", "ZoneData", "diagnose", "diagnose_zone"]
