"""Zone of every shell cell: the ``[[zones]]`` selections applied to a mesh's tag arrays."""

from __future__ import annotations

from typing import Mapping

import numpy as np

from bridge.definition.schema import suggest
from bridge.definition.zones import Zone
from shells.errors import DefinitionError, MeshError


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
