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

from shells.errors import DefinitionError, MeshError
from shells.laminate import Laminate

from .schema import check_keys, expect_table, suggest, take
from .units import UnitSystem

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
        A rule of :mod:`bridge.orientation` (``Vector``, ``Axis`` or ``Field``).
    offset : float
        Reference surface to mid-plane distance along the normal (length).
    """

    name: str
    laminate: str
    tag: str | None
    values: tuple
    orientation: Any
    offset: float = 0.0


def vector3(value: Any, where: str) -> tuple[float, float, float]:
    if (not isinstance(value, list) or len(value) != 3
            or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value)):
        raise DefinitionError(f"{where} must be a list of three numbers, e.g. [1, 0, 0]")
    vec = np.array(value, dtype=float)
    if not np.all(np.isfinite(vec)):
        raise DefinitionError(f"{where} must be finite")
    return tuple(float(v) for v in vec)  # type: ignore[return-value]


def parse_orientation(spec: Any, where: str):
    from .orientation import Axis, Field, Vector

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
                          values.get("offset", 0.0)))
    return tuple(zones)


def _tag_numbers(zone: Zone, where: str, names: Mapping[str, int]) -> list[int]:
    numbers = []
    for v in zone.values:
        if isinstance(v, str):
            if v not in names:
                raise DefinitionError(f"{where}.select.values: no tag named '{v}' in the mesh{suggest(v, names)}; "
                                      f"tag names: {', '.join(map(str, names)) or '(none)'}")
            numbers.append(int(names[v]))
        else:
            numbers.append(int(v))
    return numbers


def assign_zones(zones: tuple[Zone, ...], cell_data: Mapping[str, np.ndarray],
                 tag_names: Mapping[str, Mapping[str, int]], n_cells: int, source: str = "") -> np.ndarray:
    """Zone index (0-based, into ``zones``) of every shell cell.

    Raises
    ------
    MeshError / DefinitionError
        A tag array is missing, a value selects no cell, or cells end in no zone.
    """
    if not zones:
        raise DefinitionError("no [[zones]] entries; add at least one zone with laminate = \"...\"")
    zone_of = np.full(n_cells, -1, dtype=np.int64)
    for k, zone in enumerate(zones):
        where = f"zones[{k + 1}]"
        if zone.tag is None:
            zone_of[zone_of < 0] = k
            continue
        if zone.tag not in cell_data:
            raise MeshError(f"{where}.select.tag: the mesh has no cell array '{zone.tag}'"
                            f"{suggest(zone.tag, cell_data)}; arrays: {', '.join(cell_data) or '(none)'}", source)
        tags = np.asarray(cell_data[zone.tag]).reshape(n_cells, -1)[:, 0]
        for number in _tag_numbers(zone, where, tag_names.get(zone.tag, {})):
            hit = tags == number
            if not hit.any():
                raise MeshError(f"{where}.select.values: no cell has {zone.tag} = {number}; "
                                f"values present: {', '.join(map(str, np.unique(tags)[:20]))}", source)
            taken = hit & (zone_of >= 0) & (zone_of != k)
            if taken.any():
                first = int(np.flatnonzero(taken)[0])
                raise MeshError(f"{where} selects {int(taken.sum())} cells already in "
                                f"zones[{zone_of[first] + 1}] (e.g. cell {first}); a cell must be in exactly one "
                                "zone: make the selections disjoint", source)
            zone_of[hit] = k
    missing = np.flatnonzero(zone_of < 0)
    if missing.size:
        raise MeshError(f"{missing.size} of {n_cells} shell cells are in no zone (e.g. cells "
                        f"{', '.join(map(str, missing[:5]))}); add a [[zones]] entry without select to take the rest",
                        source)
    return zone_of
