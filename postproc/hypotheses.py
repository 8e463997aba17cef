"""Convention errors a failed comparison may come from: one small declarative class each, one explicit registry.

Each hypothesis has a ``name``, a plain-words ``explanation``, the ``fix`` (the definition setting to change)
and one method ``apply(zone) -> list of ZoneData``: the zone as it would be compared if the error were undone —
our side re-recovered under the error, or the solver's values transformed back. Variants are zones, so two
hypotheses compose (:func:`postproc.diagnose.diagnose_zone` searches pairs). To add one: write its class, add
it to :data:`HYPOTHESES`.

The solver's values are kept **as written** (``written``: its in-plane axes at angle ``alpha`` from element x,
or material axes) beside their material-axes form (``solver``), so hypotheses about numbering and axes act on
what the solver wrote, before any rotation.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from shells.laminate import Laminate, Ply
from shells.recovery_tables import build_tables
from shells.section import Section, build_section

from .compare import element_to_material, material_to_element, max_discrepancy, reference_values


@dataclass(frozen=True)
class ZoneData:
    """Everything a hypothesis needs about (a sample of) one zone's cells, which share one section.

    Attributes
    ----------
    name, section : str, Section
    phi : (n,) material angle of each cell, degrees
    R : (ncase, n, 8) resultants in the element frame; dT (ncase, n); dM, pres (ncase,)
    ours, solver : (ncase, n, nply, 3, 5) material axes (postproc.compare), NaN where not given
    scale : (nply, 5) value scales of the base comparison
    quantity : "stress" or "strain"
    axes : the axes the solver's values were declared in ("material", "element", "laminate", "vectors", "global")
    case_names : tuple of str
    twist_sign, ply_scale, ply_order, shear :
        The current ``[resultants] twist_sign`` and ``[solver_plies]`` scale, ply_order and shear (fix texts).
    written : (ncase, n, nply, 3, 5), optional
        The solver's values as written (default: ``solver``, material axes).
    alpha : (n,), optional
        Angle of the solver's in-plane axes from element x, degrees (0: element or global axes).
    fixes : tuple of str
        The fixes of the hypotheses applied to reach this variant.
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
    written: np.ndarray | None = None
    alpha: np.ndarray | None = None
    fixes: tuple = ()

    def __post_init__(self):
        if self.written is None:
            object.__setattr__(self, "written", self.solver)
        if self.alpha is None:
            object.__setattr__(self, "alpha", np.zeros(self.phi.shape))

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

    def to_material(self, written: np.ndarray, axes: str, alpha: np.ndarray) -> np.ndarray:
        """Values written in ``axes`` (in-plane axes at ``alpha``) → material axes of our plies."""
        if axes == "material":
            return written
        return element_to_material(written, (self.ply_angles() - alpha[:, None])[None, :, :, None], self.quantity)

    def with_solver(self, written: np.ndarray, fix: str, axes: str | None = None, alpha=None) -> "ZoneData":
        """A variant whose solver values were written as ``written`` (in ``axes`` at ``alpha``)."""
        axes = self.axes if axes is None else axes
        alpha = self.alpha if alpha is None else alpha
        return replace(self, written=written, solver=self.to_material(written, axes, alpha), axes=axes,
                       alpha=alpha, fixes=self.fixes + (fix,))

    def with_ours(self, ours: np.ndarray, fix: str, **changes) -> "ZoneData":
        """A variant whose our side is ``ours`` (inputs ``changes`` kept for later hypotheses)."""
        return replace(self, ours=ours, fixes=self.fixes + (fix,), **changes)

    def with_plies(self, plies) -> Section:
        lam = self.section.laminate
        return build_section(Laminate(lam.name, tuple(plies), lam.offset), self.section.shear_method)

    def residual(self) -> float:
        """Largest relative difference left between ``ours`` and ``solver`` (base scales)."""
        return max_discrepancy(self.ours, self.solver, np.broadcast_to(self.scale, self.ours.shape[1:3] + (5,)))


class Hypothesis:
    """Base of the hypotheses (declarative; never instantiated)."""

    name = ""
    explanation = ""
    fix = ""

    @staticmethod
    def apply(z: ZoneData) -> list[ZoneData]:
        raise NotImplementedError


class AngleSign(Hypothesis):
    name = "ply-angle-sign"
    explanation = "the solver's ply angles have the opposite sign (measured clockwise, or θ written as −θ)"
    fix = "negate the ply angles given to the solver, or those of laminate '{laminate}' in [laminates]"

    @staticmethod
    def apply(z):
        sec = z.with_plies(Ply(p.material, -p.angle, p.thickness) for p in z.section.laminate.plies)
        return [z.with_ours(z.recover(section=sec), AngleSign.fix, section=sec)]


class StackReversed(Hypothesis):
    name = "stacking-order"
    explanation = "the solver numbers the plies from the top (its ply 1 is our top ply)"
    fix = 'set [solver_plies] ply_order = "{order}"'

    @staticmethod
    def apply(z):
        order = "bottom-up" if z.ply_order == "top-down" else "top-down"
        return [z.with_solver(z.written[:, :, ::-1], StackReversed.fix.replace("{order}", order))]


class Axes(Hypothesis):
    name = "ply-value-axes"
    explanation = "the solver's ply values are in other axes than declared (material, element or laminate axes)"
    fix = 'set [solver_plies] axes = "{other}"'

    @staticmethod
    def apply(z):
        options = {"material": None, "element": np.zeros_like(z.phi), "laminate": z.phi}
        return [z.with_solver(z.written, Axes.fix.replace("{other}", axes), axes, alpha)
                for axes, alpha in options.items() if axes != z.axes]


class ResultantFrame(Hypothesis):
    name = "resultant-frame"
    explanation = "the resultants are in other axes than declared (element frame or laminate axes)"
    fix = 'set [resultants] frame = "{frame}"'

    @staticmethod
    def apply(z):
        if np.allclose(z.phi, 0.0):
            return []
        out = []
        for sign, frame in ((1.0, "laminate"), (-1.0, "element")):
            R = _rotate_resultants(z.R, sign * z.phi)
            out.append(z.with_ours(z.recover(R=R), ResultantFrame.fix.replace("{frame}", frame) +
                                   " (if it is not already)", R=R))
        return out


def _rotate_resultants(R: np.ndarray, theta_deg: np.ndarray) -> np.ndarray:
    """Resultants given in axes at θ from element x, in the element frame: N, M as stress vectors, Q as a vector."""
    out = R.copy()
    for sl, cols in ((slice(0, 3), slice(0, 3)), (slice(3, 6), slice(0, 3)), (slice(6, 8), slice(3, 5))):
        v = np.zeros(R.shape[:-1] + (5,))
        v[..., cols] = R[..., sl]
        out[..., sl] = material_to_element(v, theta_deg, "stress")[..., cols]
    return out


class ReferenceShift(Hypothesis):
    name = "zero-degree-reference"
    explanation = "the solver's 0° direction is 90° away from the definition's (its x is our y)"
    fix = ("turn the orientation of zone '{zone}' by {turn}° about the normal (e.g. the vector to the other "
           "in-plane axis)")

    @staticmethod
    def apply(z):
        return [z.with_ours(z.recover(phi=z.phi + t), ReferenceShift.fix.replace("{turn}", f"{t:+d}"),
                            phi=z.phi + t) for t in (90, -90)]


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
        w = z.written.copy()
        w[..., 2:] *= f
        return [z.with_solver(w, ShearStrain.fix.replace("{other}", other))]


class TwistSign(Hypothesis):
    name = "twisting-moment-sign"
    explanation = "the solver's twisting moment Mxy has the other sign"
    fix = "set [resultants] twist_sign = {sign}"

    @staticmethod
    def apply(z):
        R = z.R.copy()
        R[..., 5] *= -1.0
        return [z.with_ours(z.recover(R=R), TwistSign.fix.replace("{sign}", f"{-int(z.twist_sign)}"), R=R)]


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
        return [z.with_solver(z.written[..., [0, 1, 2, 4, 3]],
                              TransverseSwap.fix.replace("{where}", "[solver_plies] components")),
                z.with_ours(z.recover(R=R), TransverseSwap.fix.replace("{where}", "[fields] (Qx, Qy order)"), R=R)]


class PointsSwapped(Hypothesis):
    name = "top-bottom-swapped"
    explanation = "the solver's top and bottom points (or laminate surfaces) are swapped"
    fix = "swap bottom and top in [solver_plies] points (or locations)"

    @staticmethod
    def apply(z):
        out = [z.with_solver(z.written[:, :, :, ::-1], PointsSwapped.fix)]
        surface = z.written.copy()
        surface[:, :, 0, 0], surface[:, :, -1, 2] = z.written[:, :, -1, 2], z.written[:, :, 0, 0]
        out.append(z.with_solver(surface, PointsSwapped.fix))
        return out


class Thermal(Hypothesis):
    name = "thermal-residual"
    explanation = ("thermal residual stresses are in one side and not the other: the solver used another "
                   "temperature change than the definition")
    fix = "{what}"

    @staticmethod
    def apply(z):
        zero = np.zeros_like(z.R)
        unit = z.recover(R=zero, dT=np.ones_like(z.dT)) - z.recover(R=zero, dT=np.zeros_like(z.dT))
        d = (z.solver - z.ours) / z.scale[None, None, :, None, :]
        u = unit / z.scale[None, None, :, None, :]
        ok = np.isfinite(d) & np.isfinite(u)
        t = np.zeros(z.R.shape[0])
        for j in range(t.size):
            uu = np.sum(np.where(ok[j], u[j] ** 2, 0.0))
            t[j] = np.sum(np.where(ok[j], u[j] * d[j], 0.0)) / uu if uu > 0 else 0.0
        if not np.any(t):
            return []
        words = []
        for j in np.flatnonzero(np.abs(t) > 1e-6 * max(1.0, float(np.abs(t).max()))):
            name = z.case_names[j] if j < len(z.case_names) else str(j)
            words.append(f"[cases.{name}] delta_T = {float(np.mean(z.dT[j])) + t[j]:.4g} (the solver's temperature "
                         "change)")
        return [z.with_ours(z.ours + t[:, None, None, None, None] * unit, "set " + "; ".join(words))]


#: The pound-force in newtons and the inch in metres, exact by definition (pound = 0.45359237 kg, standard
#: gravity 9.80665 m/s², inch = 0.0254 m; NIST SP 811, 2008, appendix B), so a suggested scale that should be
#: 1 is printed as 1 (a factor rounded to 7 digits left 0.9999997).
LBF, INCH = 0.45359237 * 9.80665, 0.0254

#: Unit factors tried, and what they are (value in the definition's units = solver value / factor).
UNIT_FACTORS = ((1e3, "1e3"), (1e6, "1e6"), (1e9, "1e9"), (LBF / INCH ** 2, "psi → Pa"),
                (1e6 * INCH ** 2 / LBF, "MPa → psi"), (LBF / INCH, "lbf/in → N/m"),
                (LBF / INCH / 1e3, "lbf/in → N/mm"), (100.0, "per cent strain"))


class UnitFactor(Hypothesis):
    name = "unit-factor"
    explanation = "one side is in other units: the solver's values differ from ours by a constant unit factor"
    fix = "set [solver_plies] scale = {scale:.7g} ({what}), or fix the [resultants] force_scale / length_scale"

    @staticmethod
    def apply(z):
        return [z.with_solver(z.written / g, UnitFactor.fix.format(scale=z.ply_scale / g, what=label))
                for f, what in UNIT_FACTORS for g, label in ((f, what), (1.0 / f, f"1/({what})"))]


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
        return [z.with_ours(z.recover(section=sec), OffsetIgnored.fix, section=sec)]


#: The registry. Order breaks ties between hypotheses that explain a zone equally well.
HYPOTHESES = (AngleSign, StackReversed, Axes, ResultantFrame, ReferenceShift, ShearStrain, TwistSign, TransverseSwap,
              PointsSwapped, Thermal, UnitFactor, OffsetIgnored)
