"""The ``[result_files]`` table: how the solver's own result files are read (resultants and ply values alike).

```toml
[result_files]
case_names = "stem"              # several files: a file's case is its stem ("stem") or its folder ("folder")
integration_points = "average"   # point-cloud files: "average" each cell's points, or take the one "nearest"
                                 # the cell centroid
points_per_cell = 4              # point-cloud files: this many points per cell, in cell order ...
point_cell_id = "ELEMENT_ID"     # ... or a point array holding each point's cell id
mesh_cell_id = "KRATOS_ID"       # the mesh cell array those ids refer to (default: cell position + id_base)
id_base = 1                      # number of the first cell when ids are positions
tensor_order = "voigt"           # 6-component tensor arrays: "voigt" (xx yy zz yz xz xy) or "vtk" (xx yy zz xy yz xz)
```
Documented for users in docs/definition.md.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from shells.errors import DefinitionError

from bridge.definition.schema import check_keys, expect_table

KEYS = ("case_names", "integration_points", "points_per_cell", "point_cell_id", "mesh_cell_id", "id_base",
        "tensor_order")
#: Largest number of integration points per cell accepted.
MAX_POINTS_PER_CELL = 4096


@dataclass(frozen=True)
class ResultFiles:
    """A checked ``[result_files]`` table (module notes)."""

    case_names: str = "stem"
    integration_points: str = "average"
    points_per_cell: int | None = None
    point_cell_id: str | None = None
    mesh_cell_id: str | None = None
    id_base: int = 1
    tensor_order: str | None = None


def _choice(table, key, options, default):
    value = table.get(key, default)
    if value not in options:
        raise DefinitionError(f"result_files.{key} = {value!r}; use one of {', '.join(map(repr, options))}")
    return value


def _name(table, key):
    value = table.get(key)
    if value is not None and (not isinstance(value, str) or not value):
        raise DefinitionError(f"result_files.{key} must name an array")
    return value


def parse_result_files(table: Any) -> ResultFiles:
    """Check a ``[result_files]`` table and fill its defaults (errors name the entry; the caller adds the file)."""
    table = expect_table(table, "[result_files]")
    check_keys(table, KEYS, "result_files")
    per_cell = table.get("points_per_cell")
    if per_cell is not None and (isinstance(per_cell, bool) or not isinstance(per_cell, int)
                                 or not 1 <= per_cell <= MAX_POINTS_PER_CELL):
        raise DefinitionError(f"result_files.points_per_cell = {per_cell!r}; give a whole number from 1 to "
                              f"{MAX_POINTS_PER_CELL}")
    point_id = _name(table, "point_cell_id")
    if per_cell is not None and point_id is not None:
        raise DefinitionError("[result_files]: give points_per_cell or point_cell_id, not both")
    base = table.get("id_base", 1)
    if isinstance(base, bool) or base not in (0, 1):
        raise DefinitionError(f"result_files.id_base = {base!r}; use 0 or 1")
    return ResultFiles(_choice(table, "case_names", ("stem", "folder"), "stem"),
                       _choice(table, "integration_points", ("average", "nearest"), "average"),
                       per_cell, point_id, _name(table, "mesh_cell_id"), base,
                       _choice(table, "tensor_order", ("voigt", "vtk", None), None))
