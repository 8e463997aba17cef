"""Zones: which laminate, orientation rule and offset each shell cell takes.

``[[zones]]`` entries are applied in order. A zone selects cells by the values
of an integer cell array (``select = {tag = "gmsh:physical", values = ["SKIN", 3]}``;
names are looked up in the mesh's tag names) or, without ``select``, takes every
cell not yet taken. Every shell cell must end in exactly one zone.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from shells.errors import DefinitionError
from shells.laminate import Laminate

from bridge.definition.schema import check_keys, check_names, expect_table, suggest, take
from bridge.definition.units import UnitSystem

ZONE_SPEC = {"name": "str", "laminate": "str", "select": "any", "orientation": "any", "offset": "length"}
ORIENT_KEYS = ("vector", "axis", "origin", "mode", "field")


@dataclass(frozen=True)
class Zone:
    """One ``[[zones]]`` entry.

    Attributes
    ----------
    name : str
    laminate : str
    tag : str or None
        Name of the integer cell array that selects cells (None: all cells not yet taken).
    values : tuple
        Tag values (int) or tag names (str) selected.
    orientation : object
        A rule of :mod:`bridge.model.orientation` (``Vector``, ``Axis`` or ``Field``).
    offset : float or None
        Reference surface to mid-plane distance along the normal (length); None when the zone gives none
        (the laminate's own ``offset`` then applies, see :func:`bridge.model.sections.zone_offset`).
    """

    name: str
    laminate: str
    tag: str | None
    values: tuple
    orientation: Any
    offset: float | None = None


def vector3(value: Any, where: str) -> tuple[float, float, float]:
    if (not isinstance(value, list) or len(value) != 3
            or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value)):
        raise DefinitionError(f"{where} must be a list of three numbers, e.g. [1, 0, 0]")
    vec = np.array(value, dtype=float)
    if not np.all(np.isfinite(vec)):
        raise DefinitionError(f"{where} must be finite")
    return tuple(float(v) for v in vec)  # type: ignore[return-value]


def parse_orientation(spec: Any, where: str):
    from bridge.definition.orientation import Axis, Field, Vector

    if spec is None:
        return Vector((1.0, 0.0, 0.0))
    spec = expect_table(spec, where)
    check_keys(spec, ORIENT_KEYS, where)
    rules = [k for k in ("vector", "axis", "field") if k in spec]
    if len(rules) != 1:
        raise DefinitionError(f"{where}: give exactly one of vector = [...], axis = [...] or field = \"...\"")
    if "vector" in spec:
        if len(spec) > 1:
            raise DefinitionError(f"{where}: vector takes no other keys")
        direction = vector3(spec["vector"], f"{where}.vector")
        if np.linalg.norm(direction) == 0:
            raise DefinitionError(f"{where}.vector is zero; give a direction")
        return Vector(direction)
    if "field" in spec:
        if not isinstance(spec["field"], str) or len(spec) > 1:
            raise DefinitionError(f"{where}: field = \"name\" (a per-cell angle array, degrees) takes no other keys")
        return Field(spec["field"])
    mode = spec.get("mode", "axial")
    if mode not in ("axial", "hoop"):
        raise DefinitionError(f"{where}.mode = {mode!r}; use axial or hoop")
    direction = vector3(spec["axis"], f"{where}.axis")
    if np.linalg.norm(direction) == 0:
        raise DefinitionError(f"{where}.axis is zero; give a direction")
    origin = vector3(spec.get("origin", [0, 0, 0]), f"{where}.origin")
    return Axis(direction, origin, mode)


def parse_zones(entries: Any, laminates: Mapping[str, Laminate], units: UnitSystem) -> tuple[Zone, ...]:
    if not isinstance(entries, list):
        raise DefinitionError("zones must be written as [[zones]] entries")
    zones = []
    for k, entry in enumerate(entries, start=1):
        where = f"zones[{k}]"
        values = take(expect_table(entry, f"[[{where}]]"), ZONE_SPEC, where, units, required=("laminate",))
        lam = values["laminate"]
        if lam not in laminates:
            raise DefinitionError(f"{where}.laminate: unknown laminate '{lam}'{suggest(lam, laminates)}; "
                                  f"defined: {', '.join(laminates)}")
        tag, tag_values = None, ()
        if "select" in values:
            select = expect_table(values["select"], f"{where}.select")
            check_keys(select, ("tag", "values"), f"{where}.select", required=("tag", "values"))
            tag = select["tag"]
            tag_values = select["values"]
            if not isinstance(tag, str):
                raise DefinitionError(f"{where}.select.tag must be the name of an integer cell array")
            if not isinstance(tag_values, list) or not tag_values or not all(
                    isinstance(v, (int, str)) and not isinstance(v, bool) for v in tag_values):
                raise DefinitionError(f"{where}.select.values must be a non-empty list of numbers or tag names")
            tag_values = tuple(tag_values)
        zones.append(Zone(values.get("name", f"zone-{k}"), lam, tag, tag_values,
                          parse_orientation(values.get("orientation"), f"{where}.orientation"),
                          values.get("offset")))
    check_names([z.name for z in zones], "zones (names)")
    return tuple(zones)
