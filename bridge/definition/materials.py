"""The ``[materials.NAME]`` tables of a definition file → material dataclasses."""

from __future__ import annotations

from dataclasses import fields
from typing import Any, Mapping

from shells.errors import DefinitionError, MaterialError
from shells.materials import Core, Isotropic, Material, Orthotropic, Wood
from shells.ply_defaults import StrainLimits

from bridge.definition.ranges import check_material_values
from bridge.definition.schema import check_name, expect_table, suggest, take
from bridge.definition.units import UnitSystem

S, L, D = "stress", "length", "dimensionless"

_COMMON = {"kind": "str", "description": "str", "source": "str", "density": "density", "thickness": L,
           "knockdown": "any"}

SPECS: dict[str, dict[str, str]] = {
    "ply": {
        **_COMMON,
        "E1": S, "E2": S, "G12": S, "nu12": D, "G13": S, "G23": S, "nu23": D,
        "alpha1": "expansion", "alpha2": "expansion", "beta1": D, "beta2": D,
        "Xt": S, "Xc": S, "Yt": S, "Yc": S, "S12": S, "S13": S, "S23": S, "ilss": S,
        "strain_limits": "any", "fibre": "str", "G_Ic": "force_per_length", "G_IIc": "force_per_length",
        "F12star": D, "p_tpl": D, "p_cpl": D, "alpha0": "angle", "insitu": "bool",
    },
    "isotropic": {
        **_COMMON, "E": S, "nu": D, "alpha": "expansion", "beta": D,
        "yield_strength": S, "Xt": S, "Xc": S, "S12": S, "ilss": S,
    },
    "core": {
        **_COMMON, "G13": S, "G23": S, "Ez": S, "E1": S, "E2": S, "G12": S, "nu12": D, "S13": S, "S23": S,
        "Zc": S, "Zt": S, "Xt": S, "Xc": S, "Yt": S, "Yc": S, "S12": S, "cell_size": L,
    },
    "wood": {
        **_COMMON, "grain": "str", "E_L": S, "E_R": S, "E_T": S, "G_LR": S, "G_LT": S, "G_RT": S,
        "nu_LR": D, "nu_LT": D, "nu_RT": D, "tension_parallel": S, "compression_parallel": S,
        "tension_perpendicular": S, "compression_perpendicular": S, "shear_parallel": S, "rolling_shear": S,
    },
}
REQUIRED = {"ply": ("E1", "E2", "G12", "nu12"), "isotropic": ("E", "nu"), "core": ("G13", "G23"),
            "wood": ("grain", "E_L", "E_R", "E_T", "G_LR", "G_LT", "G_RT", "nu_LR", "nu_LT", "nu_RT")}
_RENAME = {"isotropic": {"alpha": "cte", "beta": "cme"}, "ply": {"alpha0": "alpha0_deg"}}
_CLASSES = {"ply": Orthotropic, "isotropic": Isotropic, "core": Core, "wood": Wood}
KNOCKDOWN_KEYS = ("environment", "damage", "other")
#: Strain-limit keys of earlier versions, refused with a pointer to the strain_limits table.
OLD_STRAIN_KEYS = ("e1t", "e1c", "e2t", "e2c", "g12u")


def _strain_limits(value: Any, where: str, units: UnitSystem) -> StrainLimits:
    names = tuple(f.name for f in fields(StrainLimits))
    return StrainLimits(**take(expect_table(value, where), dict.fromkeys(names, D), where, units))


def _number(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise DefinitionError(f"{where} must be a number in (0, 1]")
    return float(value)


def _knockdown(value: Any, where: str) -> dict[str, Any]:
    """``knockdown``, ``knockdown_factors`` and ``environment_knockdowns`` of a material: a number, or a table of
    factors (environment, damage, other) multiplied together, whose ``environment`` may itself be a table by
    environment name (the default knockdown then takes its smallest factor)."""
    if isinstance(value, bool):
        raise DefinitionError(f"{where} must be a number or a table of factors")
    if isinstance(value, (int, float)):
        return {"knockdown": float(value)}
    table = expect_table(value, where)
    product, factors, environments = 1.0, [], ()
    for key, factor in table.items():
        if key not in KNOCKDOWN_KEYS:
            raise DefinitionError(f"{where}: unknown factor '{key}'{suggest(key, KNOCKDOWN_KEYS)}; "
                                  f"use {', '.join(KNOCKDOWN_KEYS)}")
        if key == "environment" and not isinstance(factor, (bool, int, float)):
            by_name = expect_table(factor, f"{where}.environment")
            if not by_name:
                raise DefinitionError(f"{where}.environment is an empty table; give environment = factor pairs")
            environments = tuple((check_name(env, f"{where}.environment"), _number(f, f"{where}.environment.{env}"))
                                 for env, f in by_name.items())
            factor = min(f for _, f in environments)
        else:
            factor = _number(factor, f"{where}.{key}")
        product *= factor
        factors.append((key, factor))
    return {"knockdown": product, "knockdown_factors": tuple(factors), "environment_knockdowns": environments}


def parse_material(name: str, table: Mapping[str, Any], units: UnitSystem, check_ranges: bool = True) -> Material:
    where = f"materials.{name}"
    table = expect_table(table, f"[{where}]")
    kind = table.get("kind", "ply")
    if kind not in SPECS:
        raise DefinitionError(f"[{where}]: kind = {kind!r} is not known{suggest(kind, SPECS)}; "
                              f"use one of {', '.join(SPECS)}")
    old = [key for key in OLD_STRAIN_KEYS if key in table]
    if old:
        raise DefinitionError(f"[{where}]: '{old[0]}' is not a key; give strain limits as a table, strain_limits = "
                              "{ fibre_tension = …, fibre_compression = …, matrix_tension = …, matrix_compression = "
                              "…, shear = … } (docs/definition.md)")
    values = take(table, SPECS[kind], where, units, REQUIRED[kind])
    if "strain_limits" in values:
        values["strain_limits"] = _strain_limits(values["strain_limits"], f"{where}.strain_limits", units)
    if "knockdown" in values:
        values.update(_knockdown(values.pop("knockdown"), f"{where}.knockdown"))
    if check_ranges:
        limits = vars(values.get("strain_limits", StrainLimits()))
        factors = {f"knockdown.{name}": factor for name, factor in values.get("knockdown_factors", ())}
        factors.update({f"knockdown.environment.{env}": f for env, f in values.get("environment_knockdowns", ())})
        check_material_values(where, kind, {**factors, **values,
                                            **{f"strain_limits.{k}": v for k, v in limits.items()}}, units)
    values.pop("kind", None)
    for old, new in _RENAME.get(kind, {}).items():
        if old in values:
            values[new] = values.pop(old)
    try:
        return _CLASSES[kind](name=name, **values).validate()
    except MaterialError as err:
        raise MaterialError(f"[{where}]: {err.detail}") from None


def parse_materials(tables: Any, units: UnitSystem, check_ranges: bool = True) -> dict[str, Material]:
    tables = expect_table(tables, "[materials]")
    if not tables:
        raise DefinitionError("[materials] is empty; define at least one material")
    return {check_name(name, "[materials]"): parse_material(name, table, units, check_ranges)
            for name, table in tables.items()}
