"""The ``[frames]`` table: how the element frame's x axis is chosen (docs/meshes.md, element frames).

```toml
[frames]
reference = [1, 0, 0]    # global direction projected on each cell to give its x axis (default global X)
vectors = "frame_x"      # optional: a per-cell (n_cells, 3) array of the mesh that replaces the reference
```
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from shells.errors import DefinitionError

from bridge.definition.schema import check_keys, expect_table
from bridge.definition.zones import vector3


@dataclass(frozen=True)
class FrameSettings:
    """A checked ``[frames]`` table.

    Attributes
    ----------
    reference : (float, float, float)
        Global direction projected on each cell to give its element x axis (not zero).
    vectors : str or None
        Name of a per-cell 3-component mesh array that replaces ``reference`` cell by cell.
    """

    reference: tuple[float, float, float] = (1.0, 0.0, 0.0)
    vectors: str | None = None


def parse_frames(table: Any) -> FrameSettings:
    """Check a ``[frames]`` table and fill its defaults (errors name the entry; the caller adds the file)."""
    table = expect_table(table, "[frames]")
    check_keys(table, ("reference", "vectors"), "frames")
    ref = vector3(table.get("reference", [1, 0, 0]), "frames.reference")
    if np.linalg.norm(ref) == 0:
        raise DefinitionError("frames.reference is zero; give a direction")
    vectors = table.get("vectors")
    if vectors is not None and not isinstance(vectors, str):
        raise DefinitionError("frames.vectors must name a per-cell 3-component array of the mesh")
    return FrameSettings(tuple(float(v) for v in ref), vectors)
