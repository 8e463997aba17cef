"""Mesh features an analyst wants to hear about that are not errors: duplicate cells and flipped neighbours.

Both are legitimate in some models (overlaid shells modelling a doubler share their nodes; a surface may
be meshed with normals that change side on purpose), so plybridge analyses every cell as given and notes
what it found (docs/meshes.md, "Notes on the mesh"). Cells of other kinds (solids, beams) are left out by
the readers with their own note (:func:`bridge.mesh.shell.shell_mesh_from_blocks`).
"""

from __future__ import annotations

import numpy as np

from bridge.mesh.shell import ShellMesh

#: Cell ids quoted in a note.
EXAMPLES = 4


def _corner_rows(mesh: ShellMesh) -> tuple[np.ndarray, np.ndarray]:
    """(n_cells, 4) corner node ids (−1 padded for triangles) and the corner count of each cell."""
    rows, counts = [], []
    for c in mesh.corners():
        pad = np.full((len(c), 4), -1, dtype=np.int64)
        pad[:, :c.shape[1]] = c
        rows.append(pad)
        counts.append(np.full(len(c), c.shape[1], dtype=np.int64))
    if not rows:
        return np.zeros((0, 4), np.int64), np.zeros(0, np.int64)
    return np.concatenate(rows), np.concatenate(counts)


def duplicate_cells(mesh: ShellMesh) -> np.ndarray:
    """Global ids of cells whose corner nodes are those of another cell (every member of each group)."""
    rows, _ = _corner_rows(mesh)
    if len(rows) < 2:
        return np.zeros(0, np.int64)
    key = np.sort(rows, axis=1)
    order = np.lexsort(key.T[::-1])
    k = key[order]
    same = (k[1:] == k[:-1]).all(axis=1)
    member = np.zeros(len(k), dtype=bool)
    member[1:] |= same
    member[:-1] |= same
    return np.sort(order[member])


def _slot_keys(rows: np.ndarray, counts: np.ndarray, npts: np.int64, i: int) -> tuple[np.ndarray, np.ndarray]:
    """(cells that have corner slot ``i``, the directed key ``(lo·npts + hi)·2 + (a < b)`` of their edge from
    corner ``i`` to the next)."""
    has = np.flatnonzero(counts > i)
    a = rows[has, i]
    b = np.where(counts[has] == i + 1, rows[has, 0], rows[has, (i + 1) % 4])
    key = np.minimum(a, b)
    key *= npts
    key += np.maximum(a, b)
    key *= 2
    key += a < b
    return has, key


def flipped_edges(mesh: ShellMesh, skip: np.ndarray | None = None) -> tuple[int, list[tuple[int, int]]]:
    """Edges shared by exactly two cells that run the same way in both (their normals point opposite ways).

    Memory: one int64 key per edge, sorted in place, and byte masks; the example cells are found afterwards
    by their keys (at 5 million cells about 0.5 GB at the peak, where a sort of (key, cell) pairs took 1.5 GB).

    Returns
    -------
    count : int
    examples : list of (cell, cell)
        Up to :data:`EXAMPLES` pairs of global cell ids.
    """
    rows, counts = _corner_rows(mesh)
    cells = np.arange(len(rows))
    if skip is not None and skip.size:
        keep = np.ones(len(rows), dtype=bool)
        keep[skip] = False
        rows, counts, cells = rows[keep], counts[keep], cells[keep]
    if len(rows) < 2:
        return 0, []
    npts = np.int64(len(mesh.points))
    key = np.empty(int(counts.sum()), dtype=np.int64)
    pos = 0
    for i in range(4):
        k = _slot_keys(rows, counts, npts, i)[1]
        key[pos:pos + len(k)] = k
        pos += len(k)
    key.sort()
    edge = key >> 1
    same_edge = edge[1:] == edge[:-1]
    del edge
    pair = same_edge.copy()
    pair[1:] &= ~same_edge[:-1]            # not the second and third of a group
    pair[:-1] &= ~same_edge[1:]            # not the first and second of a group of three or more
    pair &= key[1:] == key[:-1]
    flipped = np.flatnonzero(pair)
    wanted = key[flipped[:4 * EXAMPLES]]   # the first flipped edges in key order: two cells each
    owners: dict[int, list[int]] = {int(w): [] for w in wanted}
    for i in range(4):
        has, k = _slot_keys(rows, counts, npts, i)
        for h in np.flatnonzero(np.isin(k, wanted)):
            owners[int(k[h])].append(int(cells[has[h]]))
    examples = list(dict.fromkeys((min(owners[int(w)]), max(owners[int(w)])) for w in wanted))[:EXAMPLES]
    return int(flipped.size), examples


def mesh_notes(mesh: ShellMesh) -> list[str]:
    """One sentence for each mesh feature found (duplicate cells, flipped neighbours); empty when none."""
    notes = []
    dup = duplicate_cells(mesh)
    if dup.size:
        notes.append(f"{dup.size} cells share their corner nodes with another cell (e.g. cells "
                     f"{', '.join(map(str, dup[:EXAMPLES]))}); each is analysed as given. If they are not "
                     "meant to overlap (a doubler, a second layer), remove the duplicates: the solver counts "
                     "their stiffness twice")
    count, pairs = flipped_edges(mesh, dup)
    if count:
        notes.append(f"{count} edges join two cells whose normals point opposite ways (e.g. cells "
                     f"{'; '.join(f'{a} and {b}' for a, b in pairs)}); each cell's plies are stacked along its "
                     "own normal, so bottom and top swap between them. If that is not intended, orient the "
                     "normals consistently in the mesh")
    return notes
