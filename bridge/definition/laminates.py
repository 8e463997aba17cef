"""The ``[laminates.NAME]`` tables of a definition file → :class:`shells.laminate.Laminate`.

A laminate is given either by a stacking sequence (``layup`` with a default
``material`` and optional default ply ``thickness``) or by an explicit
``plies`` list of ``{material, angle, thickness}`` tables, bottom to top.
A ply's thickness is, in order of precedence: its ``@t`` override in the
layup (or its own ``thickness``), the laminate's ``thickness``, the material's
``thickness``.
"""

from __future__ import annotations

from typing import Any, Mapping

from shells.errors import DefinitionError, LayupError
from shells.laminate import Laminate, Ply
from shells.materials import Material
from shells.stacking import MAX_ANGLE, parse_layup

from bridge.definition.schema import check_name, expect_table, suggest, take
from bridge.definition.units import UnitSystem

SPEC = {"layup": "str", "material": "str", "thickness": "length", "plies": "any", "description": "str",
        "offset": "length"}
PLY_SPEC = {"material": "str", "angle": "angle", "thickness": "length"}


def _material(name: str | None, materials: Mapping[str, Material], where: str) -> Material:
    if name is None:
        raise DefinitionError(f"{where}: no material; set material = \"...\" on the laminate or the ply")
    if name not in materials:
        raise DefinitionError(f"{where}: unknown material '{name}'{suggest(name, materials)}; "
                              f"defined materials: {', '.join(materials)}")
    return materials[name]


def _thickness(explicit: float | None, laminate_default: float | None, material: Material, where: str) -> float:
    for value in (explicit, laminate_default, material.thickness):
        if value is not None:
            if not value > 0:
                raise DefinitionError(f"{where}: thickness {value!r} must be positive")
            return float(value)
    raise DefinitionError(f"{where}: no thickness; give @t in the layup, thickness on the laminate, "
                          f"or thickness in [materials.{material.name}]")


def parse_laminate(name: str, table: Mapping[str, Any], materials: Mapping[str, Material],
                   units: UnitSystem) -> Laminate:
    where = f"laminates.{name}"
    values = take(expect_table(table, f"[{where}]"), SPEC, where, units)
    if ("layup" in values) == ("plies" in values):
        raise DefinitionError(f"[{where}]: give exactly one of layup = \"[...]\" or plies = [...]")
    default_material = values.get("material")
    default_t = values.get("thickness")
    plies = []
    if "layup" in values:
        try:
            specs = parse_layup(values["layup"])
        except LayupError as err:
            raise LayupError(f"[{where}].layup: {err.detail}") from None
        for k, spec in enumerate(specs, start=1):
            at = f"[{where}] ply {k}"
            mat = _material(spec.material or default_material, materials, at)
            plies.append(Ply(mat, spec.angle, _thickness(spec.thickness, default_t, mat, at)))
    else:
        entries = values["plies"]
        if not isinstance(entries, list) or not entries:
            raise DefinitionError(f"[{where}].plies must be a non-empty list of {{material, angle, thickness}}")
        for k, entry in enumerate(entries, start=1):
            at = f"{where}.plies[{k}]"
            ply = take(expect_table(entry, at), PLY_SPEC, at, units, required=("angle",))
            if not abs(ply["angle"]) <= MAX_ANGLE:
                raise DefinitionError(f"{at}.angle = {ply['angle']:g}° is more than {MAX_ANGLE:g} degrees; "
                                      "give the ply angle in degrees between -360 and 360")
            mat = _material(ply.get("material", default_material), materials, at)
            plies.append(Ply(mat, ply["angle"], _thickness(ply.get("thickness"), default_t, mat, at)))
    return Laminate(name, tuple(plies), values.get("offset", 0.0), values.get("layup"))


def parse_laminates(tables: Any, materials: Mapping[str, Material], units: UnitSystem) -> dict[str, Laminate]:
    tables = expect_table(tables, "[laminates]")
    if not tables:
        raise DefinitionError("[laminates] is empty; define at least one laminate")
    return {check_name(name, "[laminates]"): parse_laminate(name, table, materials, units)
            for name, table in tables.items()}
