"""Unit systems of definition files and conversion of entries with pint.

A definition declares one consistent force–length system. A bare number is
taken in that system; a string carries its own unit ("181 GPa", "0.125 mm",
"1.6 g/cm^3", "26 Msi", "0.058 lb/in^3"; a weight density such as "0.058 lbf/in^3" is divided by
standard gravity) and is converted once, on load. Mass is in the consistent unit
force·time²/length (tonne in N-mm, kg in N-m, lbf·s²/in in lbf-in), so that
areal mass times acceleration is a pressure in the same system.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

from shells.errors import DefinitionError


@dataclass(frozen=True)
class UnitSystem:
    """A consistent force–length–temperature system."""

    name: str
    force: str
    length: str
    temperature: str  # a temperature *difference* unit
    force_symbol: str = "N"
    length_symbol: str = "mm"
    temperature_symbol: str = "°C"

    @property
    def stress(self) -> str:
        return f"{self.force}/{self.length}**2"

    def unit_of(self, kind: str) -> str:
        """pint unit string of a quantity kind in this system."""
        return {
            "stress": self.stress,
            "length": self.length,
            "force": self.force,
            "force_per_length": f"{self.force}/{self.length}",
            "moment_per_length": f"{self.force}",
            "density": f"{self.force}*s**2/{self.length}**4",
            "areal_mass": f"{self.force}*s**2/{self.length}**3",
            "expansion": f"1/{self.temperature}",
            "temperature": self.temperature,
            "dimensionless": "dimensionless",
            "angle": "degree",
        }[kind]

    def label(self, kind: str) -> str:
        """Short human label of a unit, for tables and colour-bar titles."""
        return self.labels().get(kind, kind)

    def labels(self) -> dict[str, str]:
        """Every quantity kind → its short label in this system (``stress`` → ``MPa``)."""
        f, l, t = self.force_symbol, self.length_symbol, self.temperature_symbol
        stress = {"N-mm": "MPa", "N-m": "Pa", "lbf-in": "psi"}.get(self.name, f"{f}/{l}²")
        return {
            "stress": stress,
            "pressure": stress,
            "length": l,
            "force": f,
            "force_per_length": f"{f}/{l}",
            "moment_per_length": f"{f}·{l}/{l}",
            "stiffness_A": f"{f}/{l}",
            "stiffness_B": f,
            "stiffness_D": f"{f}·{l}",
            "stiffness_H": f"{f}/{l}",
            "density": {"N-mm": "t/mm³", "N-m": "kg/m³"}.get(self.name, f"{f}·s²/{l}⁴"),
            "areal_mass": {"N-mm": "t/mm²", "N-m": "kg/m²"}.get(self.name, f"{f}·s²/{l}³"),
            "expansion": f"1/{t}",
            "temperature": t,
            "angle": "°",
            "dimensionless": "-",
            "strain": "-",
        }


SYSTEMS = {
    "N-mm": UnitSystem("N-mm", "newton", "millimeter", "delta_degC", "N", "mm", "°C"),
    "N-m": UnitSystem("N-m", "newton", "meter", "delta_degC", "N", "m", "°C"),
    "lbf-in": UnitSystem("lbf-in", "force_pound", "inch", "delta_degF", "lbf", "in", "°F"),
}


#: Spellings of the trade pint does not know: million psi, pound mass.
EXTRA_UNITS = ("Msi = 1e6 * psi", "msi = Msi", "lbm = pound")

#: An example entry of each quantity kind in each system, for error messages.
EXAMPLES = {
    "N-mm": {"stress": "181 GPa", "length": "0.125 mm", "force": "1 lbf", "density": "1.6 g/cm^3", "expansion": "22.5e-6 /degC",
             "temperature": "-155 degC"},
    "N-m": {"stress": "181 GPa", "length": "0.125 mm", "force": "1 lbf", "density": "1600 kg/m^3", "expansion": "22.5e-6 /degC",
            "temperature": "-155 degC"},
    "lbf-in": {"stress": "26.3 Msi", "length": "0.005 in", "force": "1 N", "density": "0.058 lb/in^3",
               "expansion": "12.5e-6 /degF", "temperature": "-280 degF"},
}


def example(kind: str, units: UnitSystem) -> str:
    """A quantity string of ``kind`` that fits the unit system, e.g. '26.3 Msi' in lbf-in; a kind with no
    example of its own gets one of the system's unit (never another kind's example)."""
    return EXAMPLES[units.name].get(kind) or f"1 {units.unit_of(kind)}"


@functools.lru_cache(maxsize=1)
def registry():
    """The pint unit registry (built once per process; pint is imported lazily), with :data:`EXTRA_UNITS`."""
    import pint

    ureg = pint.UnitRegistry()
    for line in EXTRA_UNITS:
        ureg.define(line)
    return ureg


def system(name: object, source: str) -> UnitSystem:
    if not isinstance(name, str) or name not in SYSTEMS:
        raise DefinitionError(
            f"units = {name!r} is not a known unit system; use one of {', '.join(SYSTEMS)}", source)
    return SYSTEMS[name]  # type: ignore[index]


def convert(value: object, kind: str, units: UnitSystem, where: str) -> float:
    """Convert one definition entry to a float in ``units``.

    Parameters
    ----------
    value : int, float or str
        A number in the declared system, or a string with its own unit.
    kind : str
        Quantity kind (see :meth:`UnitSystem.unit_of`).
    where : str
        The entry, e.g. ``"materials.cf-ud.E1"``, named in error messages.
    """
    if isinstance(value, bool):
        raise DefinitionError(f"{where} = {value!r}: expected a number or a quantity string such as "
                              f"'{example(kind, units)}'")
    if isinstance(value, (int, float)):
        out = float(value)
    elif isinstance(value, str):
        if len(value) > 100:
            raise DefinitionError(f"{where}: the quantity string is too long (over 100 characters)")
        out = _parse_quantity(value, kind, units, where)
    else:
        raise DefinitionError(
            f"{where} = {value!r}: expected a number or a quantity string such as '{example(kind, units)}', "
            f"got {type(value).__name__}")
    if not math.isfinite(out):
        raise DefinitionError(f"{where} = {value!r} is not finite; give a finite number")
    return out


_DELTA = (("°C", "delta_degC"), ("°F", "delta_degF"), ("degC", "delta_degC"), ("degF", "delta_degF"))


def _parse_quantity(text: str, kind: str, units: UnitSystem, where: str) -> float:
    import pint

    ureg = registry()
    target = units.unit_of(kind)
    if kind in ("expansion", "temperature"):
        # Temperatures in a definition are differences: '10 degC' means a rise of 10 K.
        for absolute, delta in _DELTA:
            if "delta_" + absolute not in text:
                text = text.replace(absolute, delta)
    try:
        quantity = ureg.Quantity(text)
        if kind == "density" and quantity.check("[force]/[length]**3"):
            quantity = quantity / ureg.Quantity(1.0, "g_0")   # a weight density such as lbf/in^3
        return float(quantity.to(target).magnitude)
    except pint.DimensionalityError:
        raise DefinitionError(
            f"{where} = {text!r} has the wrong dimension; expected a {kind.replace('_', ' ')} "
            f"such as '{example(kind, units)}'") from None
    except Exception:  # pint's parser raises many kinds (tokenize errors, assertions) on odd text
        raise DefinitionError(
            f"{where} = {text!r} is not a quantity pint understands; write e.g. '{example(kind, units)}' or a "
            "plain number") from None
