"""Plausible ranges of material values, ply angles, offsets and temperature changes.

Every value that enters a stiffness or a criterion is checked after unit conversion, against a range in SI
units with a short reason. A value outside is refused with one line naming the key, the value in the file's
unit system, the range in the same units and the likely mistake ("181 read as 181 MPa: did you mean "181 GPa"
(= 181000 MPa)?", "looks like psi in an N-mm file", :mod:`bridge.definition.slips`).
``[analysis] check_ranges = false`` accepts exotic data; the run metadata then says the ranges were not checked.
Each material kind's table below covers every number its ``[materials.NAME]`` table accepts (a test holds
this), so a new key needs a range here.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

from shells.errors import DefinitionError

from bridge.definition.slips import SI, likely_mistake, show, si_factor, span
from bridge.definition.units import UnitSystem

__all__ = ["DELTA_T", "RANGES", "Range", "SI", "check_laminates_and_cases", "check_material_values",
           "check_value", "si_factor"]


@dataclass(frozen=True)
class Range:
    """A plausible interval of one kind of value, in SI units; ``span`` shows it to the user (SI files).

    ``low``/``high`` bound the magnitude when ``magnitude`` is set (signed values such as expansion
    coefficients); ``typical`` is a common value; ``reason`` says why the bounds are there. ``usual`` (default:
    the whole range) is the narrower band where values of the kind nearly always fall: a reading of a slip is
    suggested only when it lands there (:mod:`bridge.definition.slips`), and never when ``readings`` is false.
    """

    kind: str
    low: float
    high: float
    typical: float
    span: str
    what: str
    reason: str
    magnitude: bool = False
    zero_ok: bool = False
    usual: tuple[float, float] | None = None
    readings: bool = True

    def holds(self, si_value: float) -> bool:
        v = abs(si_value) if self.magnitude else si_value
        return (self.zero_ok and si_value == 0.0) or self.low <= v <= self.high

    def usual_holds(self, si_value: float) -> bool:
        """Whether ``si_value`` lies in the usual band (inside the range too)."""
        lo, hi = self.usual or (self.low, self.high)
        v = abs(si_value) if self.magnitude else si_value
        return self.readings and self.holds(si_value) and lo <= v <= hi


GPA, MPA = 1e9, 1e6

_STRENGTH = Range("stress", 0.1 * MPA, 10 * GPA, 300 * MPA, "0.1 MPa–10 GPa", "a strength",
                  "foam cores fail from about 0.1 MPa; no structural material exceeds about 10 GPa",
                  usual=(5 * MPA, 4 * GPA))
_CORE_STRENGTH = Range("stress", 0.01 * MPA, 1 * GPA, 2 * MPA, "0.01 MPa–1 GPa", "a core strength",
                       "the lightest foams and honeycombs fail from about 0.01 MPa in shear or crushing",
                       usual=(0.1 * MPA, 50 * MPA))
_EXPANSION = Range("expansion", 0.0, 2e-4, 20e-6, "|α| ≤ 200e-6 /°C", "an expansion coefficient",
                   "polymers and foams stay below about 150e-6 per °C; carbon fibres are slightly negative",
                   magnitude=True, zero_ok=True, usual=(0.0, 150e-6))
_SWELLING = Range("dimensionless", 0.0, 2.0, 0.3, "|β| ≤ 2", "a swelling coefficient",
                  "moisture strain per unit moisture fraction of composite plies is about 0.2–0.6", magnitude=True,
                  zero_ok=True, usual=(0.05, 1.0))
_STRAIN = Range("dimensionless", 1e-4, 0.2, 0.01, "0.0001–0.2", "a strain allowable",
                "failure strains of plies and metals lie between 0.01 % and 20 %", usual=(1e-3, 0.1))
_DENSITY = Range("density", 10.0, 25000.0, 1600.0, "10–25 000 kg/m³", "a density",
                 "from light foams (about 30 kg/m³) to tungsten (19 300 kg/m³)", zero_ok=True,
                 usual=(20.0, 20000.0))
_CORE_DENSITY = Range("density", 5.0, 2000.0, 80.0, "5–2000 kg/m³", "a core density",
                      "honeycombs and foams weigh 16–300 kg/m³, balsa up to about 250 kg/m³", zero_ok=True,
                      usual=(16.0, 400.0))
_PLY_MODULUS = Range("stress", 1 * GPA, 1000 * GPA, 100 * GPA, "1–1000 GPa", "a ply fibre-direction modulus",
                     "natural-fibre plies start near 5 GPa, ultra-high-modulus carbon ends near 600 GPa",
                     usual=(5 * GPA, 700 * GPA))
_PLY_TRANSVERSE = Range("stress", 0.3 * GPA, 1000 * GPA, 10 * GPA, "0.3–1000 GPa", "a ply modulus",
                        "matrix-dominated moduli of plies are 3–15 GPa, fabrics up to about 100 GPa",
                        usual=(2 * GPA, 150 * GPA))
_PLY_SHEAR = Range("stress", 0.1 * GPA, 500 * GPA, 5 * GPA, "0.1–500 GPa", "a ply shear modulus",
                   "matrix-dominated shear moduli of plies are 2–8 GPa, ±45 fabrics up to about 60 GPa",
                   usual=(1 * GPA, 100 * GPA))
_ISO_MODULUS = Range("stress", 0.01 * GPA, 1000 * GPA, 70 * GPA, "0.01–1000 GPa", "a Young's modulus",
                     "from elastomer liners (about 0.01 GPa) and adhesive films (2–4 GPa) to steels (210 GPa)",
                     usual=(0.5 * GPA, 450 * GPA))
_CORE_SHEAR = Range("stress", 0.5 * MPA, 5 * GPA, 50 * MPA, "0.5 MPa–5 GPa", "a core shear modulus",
                    "foam and honeycomb cores shear at 5–600 MPa", usual=(2 * MPA, 1 * GPA))
_CORE_MODULUS = Range("stress", 1 * MPA, 50 * GPA, 300 * MPA, "1 MPa–50 GPa", "a core modulus",
                      "flatwise moduli of cores are 10 MPa–3 GPa", zero_ok=True, usual=(5 * MPA, 5 * GPA))
_PLY_THICKNESS = Range("length", 1e-6, 0.01, 1.5e-4, "0.001–10 mm", "a ply thickness",
                       "plies are 0.02–1 mm thick; thick metal layers a few mm", usual=(2e-5, 2e-3))
_LAYER_THICKNESS = Range("length", 1e-6, 0.2, 1e-3, "0.001–200 mm", "a layer thickness",
                         "films from a few µm, sheets and liners up to some tens of mm", usual=(1e-5, 0.05))
_CORE_THICKNESS = Range("length", 1e-4, 1.0, 0.02, "0.1–1000 mm", "a core thickness",
                        "sandwich cores are 1–200 mm thick", usual=(1e-3, 0.3))
_CELL_SIZE = Range("length", 5e-4, 0.05, 5e-3, "0.5–50 mm", "a honeycomb cell size",
                   "honeycomb cells are 3–25 mm across", usual=(2e-3, 0.03))
_NU12 = Range("dimensionless", 0.0, 0.7, 0.3, "0–0.7", "a ply Poisson's ratio",
              "plies 0.02–0.45, ±45 fabrics taken as plies up to about 0.7", usual=(0.05, 0.6))
_NU23 = Range("dimensionless", 0.0, 0.95, 0.4, "0–0.95", "a transverse Poisson's ratio",
              "matrix-dominated ν23 of plies is 0.3–0.6", usual=(0.2, 0.7))
_NU_ISO = Range("dimensionless", 0.0, 0.499, 0.3, "0–0.499", "a Poisson's ratio",
                "engineering metals and polymers 0.2–0.45 (auxetic layers are exotic)", usual=(0.1, 0.49))
_WOOD_ALONG = Range("stress", 0.3 * GPA, 40 * GPA, 10 * GPA, "0.3–40 GPa", "a wood modulus along the grain",
                    "from light balsa (about 1 GPa) to dense hardwoods (about 20 GPa)")
_WOOD_ACROSS = Range("stress", 5 * MPA, 5 * GPA, 500 * MPA, "5 MPa–5 GPa", "a wood modulus across the grain",
                     "radial and tangential moduli are 1–10 % of the modulus along the grain")
_WOOD_SHEAR = Range("stress", 1 * MPA, 3 * GPA, 300 * MPA, "1 MPa–3 GPa", "a wood shear modulus",
                    "from the rolling shear of balsa (some MPa) to the LR shear of hardwoods (about 1.5 GPa)")
_WOOD_NU = Range("dimensionless", 0.0, 0.95, 0.4, "0–0.95", "a wood Poisson's ratio",
                 "measured ratios of woods are 0.01–0.8 (the radial-tangential ratio is the largest)")
_WOOD_STRENGTH = Range("stress", 0.05 * MPA, 500 * MPA, 20 * MPA, "0.05–500 MPa", "a wood strength",
                       "from the tension across the grain of balsa (under 1 MPa) to the tension along the grain of "
                       "dense hardwoods (about 200 MPa)")
_WOOD_DENSITY = Range("density", 40.0, 1400.0, 500.0, "40–1400 kg/m³", "a wood density",
                      "from the lightest balsa (about 60 kg/m³) to lignum vitae (about 1300 kg/m³)", zero_ok=True)
_CORE_NU = Range("dimensionless", 0.0, 0.95, 0.3, "0–0.95", "a core in-plane Poisson's ratio",
                 "foams 0.2–0.4, end-grain wood up to about 0.7")
_FRACTURE_ANGLE = Range("angle", 30.0, 80.0, 53.0, "30–80°", "a fracture angle",
                        "measured fracture angles under transverse compression are 50–56°")
_TOUGHNESS = Range("force_per_length", 20.0, 10000.0, 500.0, "20 J/m²–10 kJ/m² (0.02–10 N/mm)",
                   "an interlaminar fracture toughness",
                   "mode I and II toughness of polymer-matrix plies is about 0.1–3 kJ/m², brittle epoxies to "
                   "thermoplastics", usual=(50.0, 5000.0))
_INCLINATION = Range("dimensionless", 0.05, 0.6, 0.3, "0.05–0.6", "a Puck inclination parameter",
                     "published inclinations of carbon and glass plies are 0.25–0.35 (Puck, Kopp & Knops 2002)",
                     usual=(0.15, 0.45))
_INTERACTION = Range("dimensionless", 0.0, 1.0, 0.5, "|F12*| ≤ 1", "a Tsai-Wu interaction coefficient",
                     "F12* = −0.5 is the common default; |F12*| > 1 leaves the envelope open", magnitude=True,
                     zero_ok=True, readings=False)
_KNOCKDOWN = Range("dimensionless", 0.1, 1.0, 0.8, "0.1–1", "a knockdown (fraction of strength retained)",
                   "environment and damage factors of composites multiply to about 0.4–0.9; below 0.1 next to "
                   "nothing is left", usual=(0.2, 1.0))
#: Temperature change: the largest change in service.
DELTA_T = Range("temperature", 0.0, 250.0, 20.0, "|ΔT| ≤ 250 °C", "a temperature change",
                "a cure at 180 °C cooled to −55 °C is a change of 235 K; more is nearly always an absolute "
                "temperature", magnitude=True, zero_ok=True)
#: Reference-surface offset, in laminate thicknesses from the mid-plane (a mould line is 0.5 away).
MAX_OFFSET_THICKNESSES = 10.0

_COMMON = {"density": _DENSITY, "knockdown": _KNOCKDOWN}
#: Material kind → key → plausible range (keys as written in the definition).
RANGES: dict[str, dict[str, Range]] = {
    "ply": {
        **_COMMON, "thickness": _PLY_THICKNESS, "E1": _PLY_MODULUS, "E2": _PLY_TRANSVERSE, "G12": _PLY_SHEAR,
        "G13": _PLY_SHEAR, "G23": _PLY_SHEAR, "nu12": _NU12, "nu23": _NU23,
        **{k: _STRENGTH for k in ("Xt", "Xc", "Yt", "Yc", "S12", "S13", "S23", "ilss")},
        **{f"strain_limits.{k}": _STRAIN for k in ("fibre_tension", "fibre_compression", "matrix_tension",
                                                   "matrix_compression", "shear")},
        "alpha1": _EXPANSION, "alpha2": _EXPANSION, "beta1": _SWELLING, "beta2": _SWELLING,
        "alpha0": _FRACTURE_ANGLE, "G_Ic": _TOUGHNESS, "G_IIc": _TOUGHNESS, "p_tpl": _INCLINATION,
        "p_cpl": _INCLINATION, "F12star": _INTERACTION,
    },
    "isotropic": {
        **_COMMON, "thickness": _LAYER_THICKNESS, "E": _ISO_MODULUS, "nu": _NU_ISO,
        **{k: _STRENGTH for k in ("yield_strength", "Xt", "Xc", "S12", "ilss")},
        "alpha": _EXPANSION, "beta": _SWELLING,
    },
    "core": {
        "density": _CORE_DENSITY, "knockdown": _KNOCKDOWN, "thickness": _CORE_THICKNESS, "G13": _CORE_SHEAR,
        "G23": _CORE_SHEAR, "Ez": _CORE_MODULUS, "E1": _CORE_MODULUS, "E2": _CORE_MODULUS, "G12": _CORE_SHEAR,
        "nu12": _CORE_NU, **{k: _CORE_STRENGTH for k in ("S13", "S23", "Zc", "Zt", "Xt", "Xc", "Yt", "Yc", "S12")},
        "cell_size": _CELL_SIZE,
    },
    "wood": {
        "density": _WOOD_DENSITY, "knockdown": _KNOCKDOWN, "thickness": _CORE_THICKNESS, "E_L": _WOOD_ALONG,
        "E_R": _WOOD_ACROSS, "E_T": _WOOD_ACROSS, **{k: _WOOD_SHEAR for k in ("G_LR", "G_LT", "G_RT")},
        **{k: _WOOD_NU for k in ("nu_LR", "nu_LT", "nu_RT")},
        **{k: _WOOD_STRENGTH for k in ("tension_parallel", "compression_parallel", "tension_perpendicular",
                                       "compression_perpendicular", "shear_parallel", "rolling_shear")},
    },
}
#: ``[analysis]`` values that enter a criterion.
WRINKLING_COEFFICIENT = Range("dimensionless", 0.1, 1.0, 0.5, "0.1–1", "a wrinkling coefficient",
                              "the design value is 0.5 and the theory for an ideal face 0.91 (Hoff & Mautner "
                              "1945)", usual=(0.2, 1.0))


def check_value(value: float | None, key: str, r: Range, units: UnitSystem, where: str) -> None:
    """Refuse ``value`` (in ``units``) when outside ``r``; one line with the key, value, range and likely slip."""
    if value is None or isinstance(value, bool):
        return
    si = value * si_factor(r.kind, units)
    if r.holds(si):
        return
    hint = likely_mistake(value, r, units)
    raise DefinitionError(
        f"{where} = {show(value, r.kind, units)} is outside the plausible range of {r.what} "
        f"({span(r, units)}){': ' + hint if hint else ''}{' ' if hint.endswith('?') else '. '}Fix the value, or set "
        "[analysis] check_ranges = false to accept exotic data")


def check_material_values(where: str, kind: str, values: Mapping[str, object], units: UnitSystem) -> None:
    """Check the values written for one material (definition keys, converted to ``units``) against
    :data:`RANGES`; ``where`` is ``materials.NAME``. A factor of a knockdown table (``knockdown.damage``) is
    checked against the knockdown's range."""
    table = RANGES.get(kind, {})
    for key, value in values.items():
        r = table.get(key) or (table.get("knockdown") if key.startswith("knockdown.") else None)
        if r is not None and isinstance(value, (int, float)) and not isinstance(value, bool):
            check_value(float(value), key, r, units, f"{where}.{key}")


def check_laminates_and_cases(laminates: Mapping, cases, units: UnitSystem) -> None:
    """Check the ply thicknesses of the laminates and the temperature changes of cases and combinations."""
    for lam_name, lam in laminates.items():
        for k, ply in enumerate(lam.plies, start=1):
            table = RANGES.get(ply.material.kind, {})
            if "thickness" in table:
                check_value(ply.thickness, "thickness", table["thickness"], units,
                            f"laminates.{lam_name} ply {k} thickness")
    for group, entries in (("cases", cases.cases), ("combinations", cases.combinations)):
        for name, spec in entries.items():
            if "delta_T" in spec:
                check_value(spec["delta_T"], "delta_T", DELTA_T, units, f"{group}.{name}.delta_T")


def check_offsets(laminates: Mapping, zones, units: UnitSystem) -> None:
    """Refuse a reference-surface offset (a laminate's or a zone's) more than :data:`MAX_OFFSET_THICKNESSES`
    laminate thicknesses from the mid-plane: a reference surface lies at or near the wall (h/2 at a mould line),
    and far away the stiffness about it is dominated by e²·A and loses the bending stiffness to round-off."""
    entries = [(f"laminates.{name}.offset", lam.offset, lam) for name, lam in laminates.items()]
    entries += [(f"zones.{z.name}.offset", z.offset, laminates[z.laminate]) for z in zones
                if z.offset is not None and z.laminate in laminates]
    length = units.label("length")
    for where, offset, lam in entries:
        h = lam.thickness
        if h > 0 and abs(offset) > MAX_OFFSET_THICKNESSES * h:
            raise DefinitionError(
                f"{where} = {offset:g} {length} is {abs(offset) / h:.4g} laminate thicknesses ({h:g} {length}) from "
                f"the mid-plane, outside the plausible range of an offset (|offset| ≤ "
                f"{MAX_OFFSET_THICKNESSES:g} thicknesses; a mould line is 0.5 away): check the unit and that "
                "the offset is the distance from the reference surface to the mid-plane (docs/conventions.md). "
                "Fix the value, or set [analysis] check_ranges = false to accept exotic data")
