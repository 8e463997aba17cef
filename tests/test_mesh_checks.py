"""Mesh notes: duplicate cells and flipped neighbours found on hand-built meshes, and kept in the store's summary.

Check values are counted by hand on the meshes drawn in each test (an independent derivation: which cells
repeat which nodes, which shared edges run the same way in both cells).
"""

from __future__ import annotations

import numpy as np

from bridge.mesh.checks import duplicate_cells, flipped_edges, mesh_notes
from bridge.mesh.shell import ShellMesh
from tests.meshes import flat_plate, grid_points, grid_quads


def test_a_consistent_plate_has_no_notes():
    assert mesh_notes(flat_plate(4, 3)) == [] and mesh_notes(flat_plate(4, 3, kind="triangle")) == []


def test_duplicates_found_whatever_the_node_order():
    q = grid_quads(2, 1)                       # cells 0, 1
    dup = np.vstack([q, q[0, [2, 3, 0, 1]][None], q[1, ::-1][None]])  # cell 2 = cell 0 rotated, 3 = 1 reversed
    mesh = ShellMesh(grid_points(2, 1), (("quad", dup),))
    assert duplicate_cells(mesh).tolist() == [0, 1, 2, 3]
    assert len(mesh_notes(mesh)) == 1       # duplicates are left out of the flipped-edge test


def test_one_flipped_cell_in_a_strip():
    """Three quads in a row, the middle one reversed: its two shared edges run the same way as in the others."""
    q = grid_quads(3, 1).copy()
    q[1] = q[1, ::-1]
    count, pairs = flipped_edges(ShellMesh(grid_points(3, 1), (("quad", q),)))
    assert count == 2 and pairs == [(0, 1), (1, 2)]


def test_flipped_edges_match_a_count_by_edge_on_random_meshes():
    """Random quad/triangle plates with random cells reversed and some duplicated: the count equals a count made
    edge by edge with a dictionary (an independent derivation), and every example pair shares a flipped edge."""
    rng = np.random.default_rng(11)
    for trial in range(20):
        nx, ny = rng.integers(2, 7, size=2)
        quads = grid_quads(nx, ny).copy()
        tris = np.zeros((0, 3), np.int64)
        flip = rng.random(len(quads)) < 0.3
        quads[flip] = quads[flip, ::-1]
        if trial % 2:                       # half the plates: the last row as triangles
            keep = np.arange(len(quads)) < len(quads) - nx
            last = quads[~keep]
            tris = np.vstack([last[:, [0, 1, 2]], last[:, [0, 2, 3]]])
            quads = quads[keep]
        blocks = [("quad", quads)] + ([("triangle", tris)] if len(tris) else [])
        if trial % 3 == 0:                  # a duplicate of cell 0 (left out of the check with its twin)
            blocks[0] = ("quad", np.vstack([quads, quads[:1]]))
        mesh = ShellMesh(grid_points(nx, ny), tuple(blocks))
        cells = [tuple(c) for _, b in blocks for c in b]
        dup = set(duplicate_cells(mesh).tolist())
        directed = {}
        for cid, c in enumerate(cells):
            if cid in dup:
                continue
            for i in range(len(c)):
                a, b = int(c[i]), int(c[(i + 1) % len(c)])
                directed.setdefault(frozenset((a, b)), []).append(((a, b), cid))
        want = {frozenset(cid for _, cid in uses) for uses in directed.values()
                if len(uses) == 2 and uses[0][0] == uses[1][0]}
        count, pairs = flipped_edges(mesh, duplicate_cells(mesh))
        assert count == len(want)
        assert len(pairs) == min(len(want), 4)
        assert all(frozenset(p) in want for p in pairs)


def test_t_joint_edges_are_not_judged():
    """Three cells on one edge (a stiffener web on a skin): the edge is not a two-cell edge, nothing noted."""
    pts = np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0], [1, -1, 0], [1, 0, 1], [1, 1, 1.0]])
    quads = np.array([[0, 1, 2, 3], [1, 4, 2, 2], [1, 2, 6, 5]])
    tri = np.array([[1, 4, 2]])
    mesh = ShellMesh(pts, (("quad", quads[[0, 2]]), ("triangle", tri)))
    assert flipped_edges(mesh)[0] == 0


def test_notes_reach_the_store_summary(tmp_path):
    from bridge.recover.resultants import write_resultants_h5
    from bridge.recover.run import run_recover
    from bridge.results.store import StoreReader
    from bridge.mesh.formats import write_mesh
    from tests.corpus.models import DEFINITION, resultants

    q = grid_quads(3, 2).copy()
    q[2] = q[2, ::-1]
    write_mesh(tmp_path / "m.vtu", ShellMesh(grid_points(3, 2), (("quad", q),)))
    write_resultants_h5(tmp_path / "r.h5", ["a"], resultants(6, 1))
    (tmp_path / "d.toml").write_text(DEFINITION)
    summary = run_recover(str(tmp_path / "d.toml"), str(tmp_path / "m.vtu"), [str(tmp_path / "r.h5")],
                          str(tmp_path / "s.h5"))
    assert len(summary["notes"]) == 1 and "normals point opposite ways" in summary["notes"][0]
    with StoreReader(tmp_path / "s.h5") as st:
        assert st.run.summary.notes == tuple(summary["notes"])
