"""Hot spots for a reader: the worst places of each zone, near-identical neighbours gathered into one row.

A cluster starts at the worst cell not yet taken in a zone (its *head*) and grows over cells that share a node
with it, lie in the same zone and have nearly the same margin: within :data:`SAME` of the head's strength
ratio, i.e. (1 + MS) ≤ (1 + MS_head)·(1 + SAME). One row per cluster; the next row of the zone starts at the
worst cell outside every cluster so far. A mirror-image location is a separate place and gets its own row.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass
from typing import Sequence

import numpy as np

#: Relative difference of (1 + margin) within which touching cells count as the same hot spot.
SAME = 0.02
#: Rows (places) per zone.
PER_ZONE = 3


@dataclass(frozen=True)
class Cluster:
    """One hot spot: the head cell, the zone, how many cells it gathers and their margin range."""

    zone: int
    head: int
    size: int
    min_margin: float
    max_margin: float


@dataclass(frozen=True)
class Adjacency:
    """Which cells share a node: each cell's corner nodes (−1 padded) and each node's cells (CSR)."""

    cell_nodes: np.ndarray   # (ncell, 4)
    node_start: np.ndarray   # (npoint + 1,)
    node_cells: np.ndarray

    def neighbours(self, cell: int) -> np.ndarray:
        nodes = self.cell_nodes[cell]
        return np.concatenate([self.node_cells[self.node_start[n]:self.node_start[n + 1]] for n in nodes if n >= 0])


def adjacency(blocks: Sequence[tuple[str, np.ndarray]], n_points: int, corners: dict) -> Adjacency:
    """The :class:`Adjacency` of connectivity blocks (global cell order; ``corners``: type → corner count)."""
    rows = []
    for t, conn in blocks:
        c = np.asarray(conn, dtype=np.int64)[:, :corners[t]]
        rows.append(np.pad(c, ((0, 0), (0, 4 - c.shape[1])), constant_values=-1))
    cell_nodes = np.vstack(rows)
    cell = np.repeat(np.arange(len(cell_nodes)), 4)
    node = cell_nodes.ravel()
    keep = node >= 0
    cell, node = cell[keep], node[keep]
    order = np.argsort(node, kind="stable")
    start = np.zeros(n_points + 1, dtype=np.int64)
    np.add.at(start, node + 1, 1)
    return Adjacency(cell_nodes, np.cumsum(start), cell[order])


def clusters(margin: np.ndarray, zone: np.ndarray, adj: Adjacency,
             per_zone: int = PER_ZONE, same: float = SAME) -> list[Cluster]:
    """The hot spots of every zone, worst first within a zone (zones in index order).

    Parameters
    ----------
    margin : (ncell,)
        Lowest margin of each cell (NaN or inf: none).
    zone : (ncell,) int
    adj : Adjacency
        From :func:`adjacency`.
    """
    m = np.where(np.isfinite(margin), margin, np.inf)
    taken = np.zeros(m.size, dtype=bool)
    out = []
    for z in np.unique(zone):
        in_zone = np.flatnonzero((zone == z) & np.isfinite(m))
        order = in_zone[np.argsort(m[in_zone], kind="stable")]
        rows = 0
        for head in order:
            if rows >= per_zone:
                break
            if taken[head]:
                continue
            limit = (1.0 + m[head]) * (1.0 + same) - 1.0 if m[head] > -1 else m[head] + same
            members = _grow(head, m, zone, adj, taken, limit)
            out.append(Cluster(int(z), int(head), len(members), float(m[head]), float(m[members].max())))
            rows += 1
    return out


def _grow(head: int, m, zone, adj: Adjacency, taken, limit: float) -> list[int]:
    members, queue = [head], deque([head])
    taken[head] = True
    while queue:
        c = queue.popleft()
        for n in adj.neighbours(c):
            if not taken[n] and zone[n] == zone[head] and m[n] <= limit:
                taken[n] = True
                members.append(int(n))
                queue.append(n)
    return members
