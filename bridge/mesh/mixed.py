"""XDMF ``Mixed`` topologies: each cell's type number followed by its nodes, split into runs of one type."""

from __future__ import annotations

import numpy as np

from shells.errors import MeshError

#: XDMF Mixed-topology type numbers -> (meshio type, nodes); 0 nodes = count follows the type.
MIXED_ID = {1: ("vertex", 0), 2: ("line", 0), 4: ("triangle", 3), 5: ("quad", 4), 6: ("tetra", 4),
            7: ("pyramid", 5), 8: ("wedge", 6), 9: ("hexahedron", 8), 0x22: ("line3", 3),
            0x23: ("quad9", 9), 0x24: ("triangle6", 6), 0x25: ("quad8", 8)}


def split_mixed(flat: np.ndarray, where: str) -> list[tuple[str, np.ndarray]]:
    """Split a Mixed topology into runs of one type, vectorised over each run."""
    blocks, r, n = [], 0, len(flat)
    while r < n:
        tid = int(flat[r])
        if tid not in MIXED_ID:
            raise MeshError(f"unknown cell type number {tid} in a Mixed topology", where)
        ctype, nn = MIXED_ID[tid]
        if nn == 0:  # polyvertex / polyline: the node count follows
            k = int(flat[r + 1])
            blocks.append((ctype, flat[r + 2:r + 2 + k][None, :]))
            r += 2 + k
            continue
        stride, count, w = nn + 1, 0, 16
        while r + (count + 1) * stride <= n:
            m = min(w, (n - r) // stride - count)
            heads = flat[r + count * stride:r + (count + m) * stride:stride]
            bad = np.flatnonzero(heads != tid)
            if bad.size:
                count += int(bad[0])
                break
            count, w = count + m, w * 2
        conn = flat[r:r + count * stride].reshape(count, stride)[:, 1:]
        blocks.append((ctype, conn))
        r += count * stride
    return blocks
