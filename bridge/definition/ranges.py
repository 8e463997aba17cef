"""Plausible ranges of material values, ply angles and temperature changes, and the likely slip behind a value
outside them.

Every value is checked after unit conversion, against a range in SI units with a short reason. A value outside
is refused with one line naming the key, the value in the file's unit system and the likely mistake ("181 read
as 181 MPa: did you mean "181 GPa"?", "looks like psi in an N-mm file"). ``[analysis] check_ranges = false``
accepts exotic data; the run metadata then says the ranges were not checked.

The likely mistake is found by reading the number again in the units an analyst could have meant (GPa for MPa,
psi in an SI file, lb/in³ for the consistent density of lbf-in, percent for a ratio ...) and keeping the reading
that falls in the range closest to the typical value.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping

from shells.errors import DefinitionError

from bridge.definition.units import UnitSystem, registry

#: SI unit each quantity kind is compared in.
SI = {"stress": "Pa", "density": "kg/m**3", "expansion": "1/delta_degC", "length": "m",
      "temperature": "delta_degC", "dimensionless": "dimensionless", "angle": "degree"}


@dataclass(frozen=True)
class Range:
    """A plausible interval of one kind of value, in SI units; ``span`` shows it to the user.

    ``low``/``high`` bound the magnitude when ``magnitude`` is set (signed values such as expansion
    coefficients); ``typical`` picks the likeliest reading of a slip; ``reason`` says why the bounds are there.
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

    def holds(self, si_value: float) -> bool:
        v = abs(si_value) if self.magnitude else si_value
        return (self.zero_ok and si_value == 0.0) or self.low <= v <= self.high


GPA, MPA = 1e9, 1e6

_STRENGTH = Range("stress", 0.1 * MPA, 10 * GPA, 300 * MPA, "0.1 MPa–10 GPa", "a strength",
                  "foam cores fail from about 0.1 MPa; no structural material exceeds about 10 GPa")
_CORE_STRENGTH = Range("stress", 0.01 * MPA, 1 * GPA, 2 * MPA, "0.01 MPa–1 GPa", "a core strength",
                       "the lightest foams and honeycombs fail from about 0.01 MPa in shear or crushing")
_EXPANSION = Range("expansion", 0.0, 2e-4, 20e-6, "|α| ≤ 200e-6 /°C", "an expansion coefficient",
                   "polymers and foams stay below about 150e-6 per °C; carbon fibres are slightly negative",
                   magnitude=True, zero_ok=True)
_SWELLING = Range("dimensionless", 0.0, 2.0, 0.3, "|β| ≤ 2", "a swelling coefficient",
                  "moisture strain per unit moisture fraction of composite plies is about 0.2–0.6", magnitude=True,
                  zero_ok=True)
_STRAIN = Range("dimensionless", 1e-4, 0.2, 0.01, "0.0001–0.2", "a strain allowable",
                "failure strains of plies and metals lie between 0.01 % and 20 %")
_DENSITY = Range("density", 10.0, 25000.0, 1600.0, "10–25 000 kg/m³", "a density",
                 "from light foams (about 30 kg/m³) to tungsten (19 300 kg/m³)", zero_ok=True)
_CORE_DENSITY = Range("density", 5.0, 2000.0, 80.0, "5–2000 kg/m³", "a core density",
                      "honeycombs and foams weigh 16–300 kg/m³, balsa up to about 250 kg/m³", zero_ok=True)
_PLY_MODULUS = Range("stress", 1 * GPA, 1000 * GPA, 100 * GPA, "1–1000 GPa", "a ply fibre-direction modulus",
                     "natural-fibre plies start near 5 GPa, ultra-high-modulus carbon ends near 600 GPa")
_PLY_TRANSVERSE = Range("stress", 0.3 * GPA, 1000 * GPA, 10 * GPA, "0.3–1000 GPa", "a ply modulus",
                        "matrix-dominated moduli of plies are 3–15 GPa, fabrics up to about 100 GPa")
_PLY_SHEAR = Range("stress", 0.1 * GPA, 500 * GPA, 5 * GPA, "0.1–500 GPa", "a ply shear modulus",
                   "matrix-dominated shear moduli of plies are 2–8 GPa, ±45 fabrics up to about 60 GPa")
_ISO_MODULUS = Range("stress", 0.01 * GPA, 1000 * GPA, 70 * GPA, "0.01–1000 GPa", "a Young's modulus",
                     "from elastomer liners (about 0.01 GPa) and adhesive films (2–4 GPa) to steels (210 GPa)")
_CORE_SHEAR = Range("stress", 0.5 * MPA, 5 * GPA, 50 * MPA, "0.5 MPa–5 GPa", "a core shear modulus",
                    "foam and honeycomb cores shear at 5–600 MPa")
_CORE_MODULUS = Range("stress", 1 * MPA, 50 * GPA, 300 * MPA, "1 MPa–50 GPa", "a core modulus",
                      "flatwise moduli of cores are 10 MPa–3 GPa", zero_ok=True)
_PLY_THICKNESS = Range("length", 1e-6, 0.01, 1.5e-4, "0.001–10 mm", "a ply thickness",
                       "plies are 0.02–1 mm thick; thick metal layers a few mm")
_LAYER_THICKNESS = Range("length", 1e-6, 0.2, 1e-3, "0.001–200 mm", "a layer thickness",
                         "films from a few µm, sheets and liners up to some tens of mm")
_CORE_THICKNESS = Range("length", 1e-4, 1.0, 0.02, "0.1–1000 mm", "a core thickness",
                        "sandwich cores are 1–200 mm thick")
_CELL_SIZE = Range("length", 5e-4, 0.05, 5e-3, "0.5–50 mm", "a honeycomb cell size",
                   "honeycomb cells are 3–25 mm across")
_NU12 = Range("dimensionless", 0.0, 0.7, 0.3, "0–0.7", "a ply Poisson's ratio",
              "plies 0.02–0.45, ±45 fabrics taken as plies up to about 0.7")
_NU23 = Range("dimensionless", 0.0, 0.95, 0.4, "0–0.95", "a transverse Poisson's ratio",
              "matrix-dominated ν23 of plies is 0.3–0.6")
_NU_ISO = Range("dimensionless", 0.0, 0.499, 0.3, "0–0.499", "a Poisson's ratio",
                "engineering metals and polymers 0.2–0.45 (auxetic layers are exotic)")
_FRACTURE_ANGLE = Range("angle", 30.0, 80.0, 53.0, "30–80°", "a fracture angle",
                        "measured fracture angles under transverse compression are 50–56°")
#: Temperature change: the largest change in service.
DELTA_T = Range("temperature", 0.0, 250.0, 20.0, "|ΔT| ≤ 250 °C", "a temperature change",
                "a cure at 180 °C cooled to −55 °C is a change of 235 K; more is nearly always an absolute "
                "temperature", magnitude=True, zero_ok=True)

_COMMON = {"density": _DENSITY}
#: Material kind → key → plausible range (keys as written in the definition).
RANGES: dict[str, dict[str, Range]] = {
    "ply": {
        **_COMMON, "thickness": _PLY_THICKNESS, "E1": _PLY_MODULUS, "E2": _PLY_TRANSVERSE, "G12": _PLY_SHEAR,
        "G13": _PLY_SHEAR, "G23": _PLY_SHEAR, "nu12": _NU12, "nu23": _NU23,
        **{k: _STRENGTH for k in ("Xt", "Xc", "Yt", "Yc", "S12", "S13", "S23", "ilss")},
        **{f"strain_limits.{k}": _STRAIN for k in ("fibre_tension", "fibre_compression", "matrix_tension",
                                                   "matrix_compression", "shear")},
        "alpha1": _EXPANSION, "alpha2": _EXPANSION, "beta1": _SWELLING, "beta2": _SWELLING,
        "alpha0": _FRACTURE_ANGLE,
    },
    "isotropic": {
        **_COMMON, "thickness": _LAYER_THICKNESS, "E": _ISO_MODULUS, "nu": _NU_ISO,
        **{k: _STRENGTH for k in ("yield_strength", "Xt", "Xc", "S12", "ilss")},
        "alpha": _EXPANSION, "beta": _SWELLING,
    },
    "core": {
        "density": _CORE_DENSITY, "thickness": _CORE_THICKNESS, "G13": _CORE_SHEAR, "G23": _CORE_SHEAR,
        "Ez": _CORE_MODULUS, "E1": _CORE_MODULUS, "E2": _CORE_MODULUS,
        **{k: _CORE_STRENGTH for k in ("S13", "S23", "Zc")}, "cell_size": _CELL_SIZE,
    },
}

#: Readings of a bare number an analyst may have meant, per quantity kind: (unit, how to say it).
_READINGS: dict[str, tuple[str, ...]] = {
    "stress": ("GPa", "MPa", "Pa", "psi", "ksi", "Msi"),
    "density": ("kg/m**3", "g/cm**3", "lb/in**3", "lb/ft**3"),
    "length": ("mm", "m", "in", "µm"),
    "expansion": ("1/delta_degC", "1/delta_degF"),
    "dimensionless": ("percent", "microstrain"),
}
_SPELL = {"kg/m**3": "kg/m^3", "g/cm**3": "g/cm^3", "lb/in**3": "lb/in^3", "lb/ft**3": "lb/ft^3",
          "1/delta_degC": "e-6 /degC", "1/delta_degF": "e-6 /degF", "percent": "%",
          "microstrain": "microstrain", "µm": "um"}
_FAMILY = {"GPa": "SI", "MPa": "SI", "Pa": "SI", "psi": "US", "ksi": "US", "Msi": "US", "kg/m**3": "SI",
           "g/cm**3": "SI", "lb/in**3": "US", "lb/ft**3": "US", "mm": "SI", "m": "SI", "µm": "SI", "in": "US",
           "1/delta_degC": "SI", "1/delta_degF": "US"}
_SYSTEM_FAMILY = {"N-mm": "SI", "N-m": "SI", "lbf-in": "US"}


def si_factor(kind: str, units: UnitSystem) -> float:
    """Multiply a value of ``kind`` in ``units`` by this to get it in :data:`SI`."""
    if kind in ("dimensionless", "angle"):
        return 1.0
    return float(registry().Quantity(1.0, units.unit_of(kind)).to(SI[kind]).magnitude)


def _show(value: float, kind: str, units: UnitSystem) -> str:
    label = {"stress": units.label("stress"), "length": units.label("length"),
             "density": {"N-mm": "t/mm³", "N-m": "kg/m³"}.get(units.name, "lbf·s²/in⁴"),
             "expansion": f"/{units.label('temperature')}", "temperature": units.label("temperature"),
             "angle": "°"}.get(kind, "")
    sep = "" if kind in ("expansion", "angle") or not label else " "
    return f"{value:g}{sep}{label}"


def likely_mistake(value: float, key: str, r: Range, units: UnitSystem) -> str:
    """What the analyst most likely meant by ``value`` (in ``units``), or '' when no reading fits."""
    ureg = registry()
    factor = si_factor(r.kind, units)
    if r.kind == "temperature":
        if 200.0 <= abs(value * factor) <= 800.0:
            return ("looks like an absolute temperature; give the change from the stress-free state "
                    f"(e.g. {'-155 degC' if units.temperature_symbol == '°C' else '-280 degF'} after a cure)")
        return ""
    if r.kind == "angle":
        return ""
    best, best_score = None, math.inf
    for unit in _READINGS.get(r.kind, ()):
        scale = 1e-6 if r.kind == "expansion" else 1.0       # expansion: read as 1e-6 per degree
        si = value * scale * float(ureg.Quantity(1.0, unit).to(SI[r.kind]).magnitude)
        if not r.holds(si) or (r.zero_ok and si == 0):
            continue
        score = abs(math.log(abs(si) / r.typical)) if si else math.inf
        if score < best_score:
            best, best_score = unit, score
    if best is None:
        return ""
    here = units.name
    if r.kind == "dimensionless":
        return (f"looks like {'a percentage' if best == 'percent' else 'microstrain'}; "
                f"write \"{value:g} {_SPELL[best]}\" or the plain ratio {value * (0.01 if best == 'percent' else 1e-6):g}")
    if r.kind == "expansion":
        return f"looks like 1e-6 per degree written without the exponent; write \"{value:g}{_SPELL[best]}\""
    spelled = _SPELL.get(best, best)
    declared = _show(value, r.kind, units)
    if r.kind == "density" and here == "lbf-in" and best == "lb/in**3":
        return (f"{value:g} read as {declared}, the consistent mass of lbf-in (386 times lb/in³): "
                f"did you mean \"{value:g} lb/in^3\"?")
    if _FAMILY.get(best) == _SYSTEM_FAMILY[here]:
        return f"{value:g} read as {declared}: did you mean \"{value:g} {spelled}\"?"
    return f"looks like {spelled} in an {here} file; write \"{value:g} {spelled}\""


def check_value(value: float | None, key: str, r: Range, units: UnitSystem, where: str) -> None:
    """Refuse ``value`` (in ``units``) when outside ``r``; one line with the key, value, range and likely slip."""
    if value is None or isinstance(value, bool):
        return
    si = value * si_factor(r.kind, units)
    if r.holds(si):
        return
    hint = likely_mistake(value, key, r, units)
    raise DefinitionError(
        f"{where} = {_show(value, r.kind, units)} is outside the plausible range of {r.what} "
        f"({r.span}){': ' + hint if hint else ''}{' ' if hint.endswith('?') else '. '}Fix the value, or set "
        "[analysis] check_ranges = false to accept exotic data")


def check_material_values(where: str, kind: str, values: Mapping[str, object], units: UnitSystem) -> None:
    """Check the values written for one material (definition keys, converted to ``units``) against
    :data:`RANGES`; ``where`` is ``materials.NAME``."""
    table = RANGES.get(kind, {})
    for key, value in values.items():
        if key in table and isinstance(value, (int, float)) and not isinstance(value, bool):
            check_value(float(value), key, table[key], units, f"{where}.{key}")


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
