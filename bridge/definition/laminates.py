"""The ``[laminates.NAME]`` tables of a definition file → :class:`shells.laminate.Laminate`.

A laminate is given either by a stacking sequence (``layup`` with a default
``material`` and optional default ply ``thickness``) or by an explicit
``plies`` list of ``{material, angle, thickness}`` tables, bottom to top.
A ply's thickness is, in order of precedence: its ``@t`` override in the
layup (or its own ``thickness``), the laminate's ``thickness``, the material's
``thickness``. In a ``plies`` list a ply may be ``wound = true`` (a balanced ±angle
layer kept as one homogenised layer) and its angle may come from a per-cell array
of the mesh, ``angle = { field = "NAME", sign = -1 }``.
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
PLY_SPEC = {"material": "str", "angle": "any", "thickness": "length", "wound": "bool"}
ANGLE_FIELD_KEYS = ("field", "sign")


def _angle(value: Any, at: str, units: UnitSystem) -> tuple[float, str | None, float]:
    """(angle, field, sign) of a ply list entry: a fixed angle, or ``{ field = "NAME", sign = ±1 }``."""
    from bridge.definition.schema import check_keys
    from bridge.definition.units import convert

    if isinstance(value, Mapping):
        check_keys(value, ANGLE_FIELD_KEYS, f"{at}.angle", required=("field",))
        name, sign = value["field"], value.get("sign", 1)
        if not isinstance(name, str) or not name:
            raise DefinitionError(f"{at}.angle.field must name a per-cell angle array of the mesh (degrees)")
        if isinstance(sign, bool) or sign not in (1, -1):
            raise DefinitionError(f"{at}.angle.sign = {sign!r}; use 1 or -1 (a -θ ply turns opposite to +θ)")
        return 0.0, name, float(sign)
    angle = convert(value, "angle", units, f"{at}.angle")
    if not abs(angle) <= MAX_ANGLE:
        raise DefinitionError(f"{at}.angle = {angle:g}° is more than {MAX_ANGLE:g} degrees; "
                              "give the ply angle in degrees between -360 and 360")
    return angle, None, 1.0


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
            angle, field, sign = _angle(ply["angle"], at, units)
            mat = _material(ply.get("material", default_material), materials, at)
            wound = ply.get("wound", False)
            if wound and mat.kind not in ("ply", "wood"):
                raise DefinitionError(f"{at}: a wound ±angle ply needs an orthotropic material; '{mat.name}' is "
                                      f"{mat.kind}")
            plies.append(Ply(mat, angle, _thickness(ply.get("thickness"), default_t, mat, at), wound, field, sign))
    return Laminate(name, tuple(plies), values.get("offset", 0.0), values.get("layup"))


def parse_laminates(tables: Any, materials: Mapping[str, Material], units: UnitSystem) -> dict[str, Laminate]:
    tables = expect_table(tables, "[laminates]")
    if not tables:
        raise DefinitionError("[laminates] is empty; define at least one laminate")
    return {check_name(name, "[laminates]"): parse_laminate(name, table, materials, units)
            for name, table in tables.items()}
