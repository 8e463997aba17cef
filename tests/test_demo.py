"""The bundled demo (battery bay): its definition, frames, resultants and the end-to-end run.

Check values come from the closed-form solution of a simply supported rectangular plate: the Navier double
sine series of first-order shear deformation (Reissner–Mindlin) plate theory for a uniform load, summed
independently here (common practice; e.g. Reddy, Mechanics of Laminated Composite Plates and Shells, 2nd ed.
2004, sec. 6.3 and 7.4, from memory). The in-plane loads are the uniform flows stated in docs/demo.md.
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.definition.loader import load_definition
from bridge.demo import write_inputs
from bridge.demo.geometry import panel_of_cells, panels
from bridge.demo.loads import load_cases
from bridge.demo.scenario import DEMO, ZONE_LAMINATES
from bridge.mesh.formats import read_mesh
from bridge.model.build import build_model
from bridge.recover.resultants import read_resultants
from bridge.model.sections import section_of
from tests.common import run_cli

TERMS = 41          # odd terms per direction: the demo's truncation, so the comparison is term for term


def navier_uniform(D, H, a, b, x, y, q0, terms=TERMS):
    """Mx, My, Mxy, Qx, Qy of a simply supported FSDT plate under uniform q0, at points (x, y).

    Each odd term (m, n) of q = Σ 16 q0/(π² m n) sin αx sin βy gives w = W sin sin, φx = X cos sin,
    φy = Y sin cos. The two moment equilibrium equations give X, Y per unit W; the transverse one gives W.
    """
    x, y = np.asarray(x, float), np.asarray(y, float)
    out = {k: np.zeros_like(x) for k in ("Mx", "My", "Mxy", "Qx", "Qy")}
    D11, D12, D22, D66 = D[0, 0], D[0, 1], D[1, 1], D[2, 2]
    H11, H22 = H[0, 0], H[1, 1]
    for m in range(1, 2 * terms, 2):
        al = m * np.pi / a
        sx, cx = np.sin(al * x), np.cos(al * x)
        for n in range(1, 2 * terms, 2):
            be = n * np.pi / b
            qmn = 16 * q0 / (np.pi ** 2 * m * n)
            rot = np.linalg.solve([[D11 * al ** 2 + D66 * be ** 2 + H11, (D12 + D66) * al * be],
                                   [(D12 + D66) * al * be, D66 * al ** 2 + D22 * be ** 2 + H22]],
                                  [-H11 * al, -H22 * be])       # (X, Y) per unit W
            W = qmn / (H11 * al * (al + rot[0]) + H22 * be * (be + rot[1]))
            X, Y = rot * W
            sy, cy = np.sin(be * y), np.cos(be * y)
            kx, ky, kxy = -al * X, -be * Y, be * X + al * Y
            out["Mx"] += (D11 * kx + D12 * ky) * sx * sy
            out["My"] += (D12 * kx + D22 * ky) * sx * sy
            out["Mxy"] += D66 * kxy * cx * cy
            out["Qx"] += H11 * (al * W + X) * cx * sy
            out["Qy"] += H22 * (be * W + Y) * sx * cy
    return out


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo-inputs")
    paths = write_inputs(folder)
    defn = load_definition(paths.definition)
    mesh = read_mesh(paths.mesh)
    return paths, defn, mesh, build_model(defn, mesh)


def _cells_of(mesh, k):
    return np.flatnonzero(panel_of_cells(mesh) == k)


def _centre_cell(mesh, k):
    pn = panels()[k]
    cells = _cells_of(mesh, k)
    x, y = pn.local(mesh.centroids()[cells])
    return cells[np.argmin(np.hypot(x - pn.a / 2, y - pn.b / 2))]


def test_zones_laminates_and_frames(inputs):
    _, defn, mesh, model = inputs
    assert [z.name for z in defn.zones] == ["floor", "walls", "lid"]
    assert {z.name: z.laminate for z in defn.zones} == ZONE_LAMINATES
    assert mesh.n_cells == sum(p.n_cells for p in panels())
    assert 2000 < mesh.n_cells < 6000
    lam = model.defn.laminates
    assert any(p.material.kind == "core" for p in lam["floor-sandwich"].plies)
    assert all(p.material.kind == "ply" for p in lam["wall-monolithic"].plies)
    wall_angles = [abs(p.angle) for p in lam["wall-monolithic"].plies]
    assert wall_angles.count(45) > len(wall_angles) / 2                      # ±45-rich
    planes = set()
    for k, pn in enumerate(panels()):
        cells = _cells_of(mesh, k)
        assert (model.zone[cells] == [z.name for z in defn.zones].index(pn.zone)).all()
        n = pn.normal
        planes.add(tuple(np.abs(n).round(6)))
        # Outward normals: from the box centre towards the panel.
        assert np.allclose(model.normal[cells], n)
        assert ((mesh.centroids()[cells] - np.asarray(DEMO.centre)) @ n > 0).all()
        # Element x: global X on floor and lid, up the wall on the walls (explicit per-cell vectors).
        expect_x = (1, 0, 0) if pn.zone in ("floor", "lid") else (0, 0, 1)
        assert np.allclose(model.frame_x[cells], expect_x)
        # Laminate 0°: fore-aft on floor and lid, horizontal round the bay (hoop) on the walls.
        phi = np.radians(model.phi[cells])[:, None]
        lam_x = np.cos(phi) * model.frame_x[cells] + np.sin(phi) * model.frame_y[cells]
        assert np.allclose(lam_x, pn.u)
        assert np.allclose(lam_x[:, 2], 0.0)
        assert np.allclose(model.phi[cells], 0.0 if pn.zone != "walls" else -90.0)
    assert planes == {(0, 0, 1), (0, 1, 0), (1, 0, 0)}


def _expected_panel_axes(defn, case, k, cells, mesh):
    """Resultants (ncell, 8) of panel k in its plate axes, recomputed here."""
    pn = panels()[k]
    sec = section_of(defn, ZONE_LAMINATES[pn.zone])
    x, y = pn.local(mesh.centroids()[cells])
    f = navier_uniform(sec.props.D, sec.H, pn.a, pn.b, x, y, case.lateral[k])
    out = np.zeros((len(cells), 8))
    out[:, 0:3] = case.membrane[k]
    out[:, 3:8] = np.stack([f[c] for c in ("Mx", "My", "Mxy", "Qx", "Qy")], -1)
    return out


def test_resultants_match_navier(inputs):
    paths, defn, mesh, model = inputs
    names, R = read_resultants(str(paths.resultants), mesh.n_cells)
    cases = load_cases()
    assert list(names) == [c.name for c in cases] and len(cases) >= 4
    assert {c.kind for c in cases} == {"limit", "ultimate"}
    # Floor centre, crash case: element frame = plate axes (φ = 0, x = u).
    j = names.index("crash-forward")
    cell = _centre_cell(mesh, 0)
    want = _expected_panel_axes(defn, cases[j], 0, np.array([cell]), mesh)[0]
    got = R[j, cell]
    assert got[3:5] == pytest.approx(want[3:5], rel=1e-9)
    assert abs(got[5]) < 1e-6 * abs(want[4]) and np.abs(got[6:8]).max() < 1e-6 * abs(want[4])   # symmetry
    # Port wall, bay pressure, off-centre cells: element x = v (up), y = n × x = −u, so
    # (N, M)_element = (vv, uu, −uv) and Q_element = (Qv, −Qu) of the plate-axis values.
    j = names.index("bay-pressure")
    cells = _cells_of(mesh, 1)[::37]
    p = _expected_panel_axes(defn, cases[j], 1, cells, mesh)
    swap = np.stack([p[:, 1], p[:, 0], -p[:, 2], p[:, 4], p[:, 3], -p[:, 5], p[:, 7], -p[:, 6]], -1)
    scale = np.maximum(np.abs(p).max(axis=0), 1e-6 * np.abs(p).max())
    assert np.abs((R[j, cells] - swap) / scale).max() < 1e-9


def _surface_strain_proxy(defn, mesh):
    """FoS × peak outer-surface principal strain of every (case, cell), from the plate solution alone.

    ε(±h/2) = A⁻¹N ± (h/2)·D⁻¹M (symmetric sections, B = 0), in the plate axes; the magnitude of the
    larger principal strain, times the case's factor of safety (1.5 limit, 1.0 ultimate).
    """
    cases = load_cases()
    out = np.zeros((len(cases), mesh.n_cells))
    for k, pn in enumerate(panels()):
        cells = _cells_of(mesh, k)
        sec = section_of(defn, ZONE_LAMINATES[pn.zone])
        assert np.abs(sec.props.B).max() < 1e-9 * np.abs(sec.props.D).max()
        h = sec.props.thickness
        for j, c in enumerate(cases):
            r = _expected_panel_axes(defn, c, k, cells, mesh)
            e0 = r[:, 0:3] @ np.linalg.inv(sec.props.A).T
            kap = r[:, 3:6] @ np.linalg.inv(sec.props.D).T
            worst = np.zeros(len(cells))
            for e in (e0 + h / 2 * kap, e0 - h / 2 * kap):
                mean, rad = (e[:, 0] + e[:, 1]) / 2, np.hypot((e[:, 0] - e[:, 1]) / 2, e[:, 2] / 2)
                worst = np.maximum(worst, np.maximum(abs(mean + rad), abs(mean - rad)))
            out[j, cells] = defn.analysis.fos(c.kind) * worst
    return out


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo-run") / "out"
    proc = run_cli("demo", "--out", out, timeout=900)     # generous bound: cold numba compilation included
    return out, proc


def test_demo_runs_end_to_end(demo_run):
    out, proc = demo_run
    assert proc.returncode == 0, proc.stderr
    lines = [line.split("\t") for line in proc.stdout.strip().splitlines()]
    assert ["report", str(out / "report.html")] in lines and ["store", str(out / "results.h5")] in lines
    assert ["margin_map", str(out / "margin.png")] in lines
    assert ["critical_ply_map", str(out / "critical-ply.png")] in lines
    assert len({line[0] for line in lines}) == len(lines)         # every key once
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "<html" in html.lower() and "qualified engineer" in html
    for name in ("margin.png", "critical-ply.png"):
        assert (out / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    for name in ("demo.toml", "bay.vtu", "resultants.h5", "bay-assigned.vtu", "results.h5"):
        assert (out / name).stat().st_size > 0
    assert "demo" in proc.stderr and "recover" in proc.stderr


def test_worst_margin_where_navier_puts_it(demo_run):
    from bridge.results.store import StoreReader

    out, proc = demo_run
    assert proc.returncode == 0, proc.stderr
    defn = load_definition(out / "demo.toml")
    mesh = read_mesh(out / "bay.vtu")
    proxy = _surface_strain_proxy(defn, mesh)
    names = [c.name for c in load_cases()]
    owner = panel_of_cells(mesh)
    zone_of_cell = np.array([panels()[k].zone for k in owner])
    # The expectation: the (case, cell) of the largest factored surface strain, clear of the runner-up
    # panel-case pairs (the scenario is built that way: crash on the floor centre).
    j, cell = np.unravel_index(np.argmax(proxy), proxy.shape)
    per_pair = {(jj, k): proxy[jj, owner == k].max() for jj in range(len(names)) for k in range(len(panels()))}
    runner_up = sorted(per_pair.values())[-2]
    assert runner_up < 0.85 * proxy[j, cell]
    assert (names[j], panels()[owner[cell]].name, cell) == ("crash-forward", "floor", _centre_cell(mesh, 0))
    with StoreReader(out / "results.h5") as st:
        summary = st.run.summary
        gov_case = st.array("cells/case")
    worst = summary.worst
    assert worst.case == names[j]
    assert zone_of_cell[worst.cell] == zone_of_cell[cell]
    spacing = np.hypot(DEMO.size[0] / DEMO.cells[0], DEMO.size[1] / DEMO.cells[1])
    c = mesh.centroids()
    assert np.linalg.norm(c[worst.cell] - c[cell]) <= 1.01 * spacing
    # Each zone's own worst cell: in the case and near the place of its largest factored strain.
    for row in summary.zones:
        zone = row.name
        sel = zone_of_cell == zone
        jz, cz = np.unravel_index(np.argmax(np.where(sel, proxy, -1.0)), proxy.shape)
        assert gov_case[row.cell] == jz, zone
        assert proxy[jz, row.cell] >= 0.95 * proxy[jz, cz], zone
