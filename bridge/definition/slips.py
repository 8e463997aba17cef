"""The likely slip behind a value outside its plausible range, and a range shown in the file's own units.

A value outside its range (:mod:`bridge.definition.ranges`) is read again in the units an analyst could have
meant. A reading is offered only when it is a plausible slip in the file's unit system:

- the corrected value lies where values of that kind usually fall (``Range.usual``), not merely inside the
  wide plausible range (``nu23 = 0.99`` is not "a percentage": 0.0099 is no transverse Poisson's ratio);
- readings in the file's own family of units come first (SI files: MPa, GPa, Pa, …; lbf-in: psi, ksi, Msi,
  …); a reading from the other family ("looks like psi in an N-mm file") only when none of its own fits;
- every suggestion says what it gives in the file's units (``did you mean "0.04 GPa" (= 40 MPa)?``), so that
  following it is a choice the analyst can check, and two readings that both fit are both offered.

The tests hold every suggestion to this: written into the file as suggested, it is inside the range.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from bridge.definition.units import UnitSystem, registry

#: SI unit each quantity kind is compared in.
SI = {"stress": "Pa", "density": "kg/m**3", "expansion": "1/delta_degC", "length": "m",
      "temperature": "delta_degC", "dimensionless": "dimensionless", "angle": "degree",
      "force_per_length": "N/m"}
#: Family of units of each unit system.
FAMILY = {"N-mm": "SI", "N-m": "SI", "lbf-in": "US"}


@dataclass(frozen=True)
class Reading:
    """A unit a bare number may have been meant in.

    ``unit`` is the pint unit, ``scale`` multiplies the number first (1e-6: an expansion coefficient written
    without its exponent), ``family`` is ``SI``, ``US`` or ``""`` (any file), ``spelled`` how to write it.
    """

    unit: str
    family: str
    spelled: str
    scale: float = 1.0

    def write(self, value: float) -> str:
        """The quantity string to put in the file, e.g. ``0.04 GPa`` or ``8.6e-6 /degC``."""
        if self.scale == 1.0:
            return f"{value:g} {self.spelled}"
        text = f"{value:g}"
        exponent = round(math.log10(self.scale))
        return f"{text}e{exponent} {self.spelled}" if "e" not in text else f"{value * self.scale:g} {self.spelled}"


#: Readings of a bare number per quantity kind, own family first, most common first.
READINGS: dict[str, tuple[Reading, ...]] = {
    "stress": (Reading("MPa", "SI", "MPa"), Reading("GPa", "SI", "GPa"), Reading("Pa", "SI", "Pa"),
               Reading("psi", "US", "psi"), Reading("ksi", "US", "ksi"), Reading("Msi", "US", "Msi")),
    "density": (Reading("kg/m**3", "SI", "kg/m^3"), Reading("g/cm**3", "SI", "g/cm^3"),
                Reading("lb/in**3", "US", "lb/in^3"), Reading("lb/ft**3", "US", "lb/ft^3")),
    "length": (Reading("mm", "SI", "mm"), Reading("m", "SI", "m"), Reading("µm", "SI", "um"),
               Reading("in", "US", "in")),
    "expansion": (Reading("1/delta_degC", "SI", "/degC", 1e-6), Reading("1/delta_degF", "US", "/degF", 1e-6)),
    "force_per_length": (Reading("J/m**2", "SI", "J/m^2"), Reading("kJ/m**2", "SI", "kJ/m^2"),
                         Reading("lbf/in", "US", "lbf/in")),
    "dimensionless": (Reading("percent", "", "%"), Reading("microstrain", "", "microstrain")),
}
_NAMES = {"percent": "a percentage", "microstrain": "microstrain"}


@dataclass(frozen=True)
class Suggestion:
    """A reading that fits: the text to write, its value in the file's units and in SI."""

    reading: Reading
    text: str
    value: float
    si: float


def si_factor(kind: str, units: UnitSystem) -> float:
    """Multiply a value of ``kind`` in ``units`` by this to get it in :data:`SI`."""
    if kind in ("dimensionless", "angle"):
        return 1.0
    return float(registry().Quantity(1.0, units.unit_of(kind)).to(SI[kind]).magnitude)


def show(value: float, kind: str, units: UnitSystem) -> str:
    """A value of ``kind`` in ``units`` with its unit label, e.g. ``181 MPa``, ``2e-05/°F``."""
    label = {"stress": units.label("stress"), "length": units.label("length"), "density": units.label("density"),
             "expansion": f"/{units.label('temperature')}", "temperature": units.label("temperature"),
             "force_per_length": units.label("force_per_length"), "angle": "°"}.get(kind, "")
    sep = "" if kind in ("expansion", "angle") or not label else " "
    return f"{value:g}{sep}{label}"


def suggestions(value: float, r, units: UnitSystem) -> list[Suggestion]:
    """The readings of ``value`` (in ``units``) that are plausible slips for range ``r``: own family first;
    the other family only when nothing of the own fits."""
    ureg = registry()
    factor = si_factor(r.kind, units)
    family = FAMILY.get(units.name, "SI")
    fits: dict[str, list[Suggestion]] = {"own": [], "other": []}
    for reading in READINGS.get(r.kind, ()):
        si = value * reading.scale * float(ureg.Quantity(1.0, reading.unit).to(SI[r.kind]).magnitude)
        if si == value * factor or not r.usual_holds(si) or si == 0.0:
            continue
        group = "own" if reading.family in ("", family) else "other"
        fits[group].append(Suggestion(reading, reading.write(value), si / factor, si))
    return fits["own"] or fits["other"]


def likely_mistake(value: float, r, units: UnitSystem) -> str:
    """What the analyst most likely meant by ``value`` (in ``units``), or '' when no plausible slip fits."""
    if r.kind == "temperature":
        if 200.0 <= abs(value * si_factor(r.kind, units)) <= 800.0:
            return ("looks like an absolute temperature; give the change from the stress-free state "
                    f"(e.g. {'-155 degC' if units.temperature_symbol == '°C' else '-280 degF'} after a cure)")
        return ""
    found = suggestions(value, r, units)[:2]
    if not found:
        return ""
    first = found[0]
    if r.kind == "dimensionless":
        return (f"looks like {_NAMES[first.reading.unit]}; write \"{first.text}\" or the plain ratio "
                f"{first.value:g}")
    here, declared = units.name, show(value, r.kind, units)
    if r.kind == "expansion":
        if first.reading.family in ("", FAMILY.get(here, "SI")):
            return f"looks like 1e-6 per degree written without the exponent; write \"{first.text}\""
        return (f"looks like 1e-6 {first.reading.spelled} written without the exponent in an {here} file; "
                f"write \"{first.text}\"")
    options = " or ".join(f"\"{s.text}\" (= {show(s.value, r.kind, units)})" for s in found)
    if r.kind == "density" and here == "lbf-in" and first.reading.unit == "lb/in**3":
        return (f"{value:g} read as {declared}, the consistent mass of lbf-in (386 times lb/in³): "
                f"did you mean {options}?")
    if first.reading.family == FAMILY.get(here, "SI"):
        return f"{value:g} read as {declared}: did you mean {options}?"
    return f"looks like {first.reading.spelled} in an {here} file; write {options}"


#: Units a range is shown in for lbf-in files, per kind: (pint unit, label, scale of the shown number).
_US_SHOW = {"stress": (("psi", "psi"), ("ksi", "ksi"), ("Msi", "Msi")), "length": (("in", "in"),),
            "density": (("lb/in**3", "lb/in³"),), "force_per_length": (("lbf/in", "lbf/in"),),
            "expansion": (("1/delta_degF", "e-6 /°F"),), "temperature": (("delta_degF", "°F"),)}


def _us(si: float, kind: str) -> str:
    ureg = registry()
    choices = _US_SHOW[kind]
    if kind == "expansion":
        return f"{si * float(ureg.Quantity(1.0, SI[kind]).to(choices[0][0]).magnitude) * 1e6:.3g}{choices[0][1]}"
    for unit, label in choices:
        v = si * float(ureg.Quantity(1.0, SI[kind]).to(unit).magnitude)
        if abs(v) < 1000 or (unit, label) == choices[-1]:
            return f"{v:.3g} {label}"
    raise AssertionError("unreachable")


def span(r, units: UnitSystem) -> str:
    """The range ``r`` as shown to a user of ``units``: its SI text in SI files, else in US customary units."""
    if FAMILY.get(units.name, "SI") == "SI" or r.kind not in _US_SHOW:
        return r.span
    if r.magnitude and r.low == 0.0:
        symbol = r.span.partition("≤")[0] if "≤" in r.span else "|value| "
        return f"{symbol}≤ {_us(r.high, r.kind)}"
    return f"{_us(r.low, r.kind)}–{_us(r.high, r.kind)}"
