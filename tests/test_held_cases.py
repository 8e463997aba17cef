"""Held cases: a cool-down whose restraint brings its own resultants is held, and R scales only the other cases.

Independent derivation (written out below, no library section code): a lined pressure vessel wall far from its
ends, laminate x axial and y hoop, ply 1 (inner) an aluminium liner, then carbon hoop plies (fibre along y). A
cool-down ΔT with the wall restrained axially (ε⁰x = 0), free to contract in the hoop direction (Ny = 0) and no
change of curvature (a long cylinder: κ = 0) leaves ε⁰y = NTy·ΔT/A22; the "solver" then reports N = Aε⁰ − N_T·ΔT
and M = Bε⁰ − M_T·ΔT. Internal pressure p on radius r gives Nx = pr/2, Ny = pr and, with κ = 0, M = B·A⁻¹N. The
liner's stresses are uniform through its thickness: σ_c = Q_al(ε⁰_c − α_al·ΔT) held and σ_p = Q_al·A⁻¹N_p scaled,
and von Mises gives R from vm(σ_c + R·σ_p) = Y exactly (a quadratic). Holding only the free thermal stress and
scaling the cool-down resultants with the pressure (the rule before held cases) gave about 2.2 times that R.
Material data: Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1 (from memory) for the carbon
plies; the liner values are typical of aluminium (from memory).
"""

from __future__ import annotations

import json

import h5py
import numpy as np
import pytest

from bridge.mesh.formats import write_mesh
from bridge.recover.resultants import write_resultants_h5
from postproc.recover import recover_cells
from shells.criteria import by_name
from shells.laminate import Laminate, Ply
from shells.materials import Isotropic, Orthotropic
from shells.recovery_tables import build_tables
from shells.section import build_section
from tests.common import run_cli
from tests.meshes import flat_plate

E_AL, NU_AL, A_AL, Y_AL = 70e3, 0.33, 23e-6, 300.0
E1, E2, G12, NU12, A1, A2 = 181e3, 10.3e3, 7.17e3, 0.28, 0.02e-6, 22.5e-6
T_LINER, T_PLY, N_PLY = 1.5, 0.5, 4
DT, P, RADIUS = -120.0, 5.0, 150.0


def _vessel():
    """Hand calculation: (cool-down resultants, pressure resultants, liner σ_c, liner σ_p)."""
    d = 1 - NU_AL ** 2
    q_al = np.array([[E_AL / d, NU_AL * E_AL / d, 0], [NU_AL * E_AL / d, E_AL / d, 0], [0, 0, E_AL / (2 + 2 * NU_AL)]])
    nu21 = NU12 * E2 / E1
    d = 1 - NU12 * nu21
    q = np.array([[E1 / d, NU12 * E2 / d, 0], [NU12 * E2 / d, E2 / d, 0], [0, 0, G12]])
    q_hoop = q[[1, 0, 2]][:, [1, 0, 2]]                      # fibre along y
    layers = [(q_al, np.array([A_AL, A_AL, 0.0]), T_LINER)] + [(q_hoop, np.array([A2, A1, 0.0]), T_PLY)] * N_PLY
    h = T_LINER + N_PLY * T_PLY
    z = -h / 2 + np.concatenate([[0.0], np.cumsum([t for _, _, t in layers])])
    w1, w2 = np.diff(z), np.diff(z ** 2) / 2
    A = sum(w1[k] * Q for k, (Q, _, _) in enumerate(layers))
    B = sum(w2[k] * Q for k, (Q, _, _) in enumerate(layers))
    NT = sum(w1[k] * Q @ a for k, (Q, a, _) in enumerate(layers))
    MT = sum(w2[k] * Q @ a for k, (Q, a, _) in enumerate(layers))
    e_c = np.array([0.0, NT[1] * DT / A[1, 1], 0.0])
    cool = np.concatenate([A @ e_c - NT * DT, B @ e_c - MT * DT, [0.0, 0.0]])
    Np = np.array([P * RADIUS / 2, P * RADIUS, 0.0])
    e_p = np.linalg.solve(A, Np)
    pressure = np.concatenate([Np, B @ e_p, [0.0, 0.0]])
    return cool, pressure, q_al @ (e_c - A_AL * DT * np.array([1, 1, 0])), q_al @ e_p


def _von_mises_ratio(sf, sm, Y):
    def vm2(s):
        return s[0] ** 2 + s[1] ** 2 - s[0] * s[1] + 3 * s[2] ** 2
    a = vm2(sm)
    b = 2 * sf[0] * sm[0] + 2 * sf[1] * sm[1] - sf[0] * sm[1] - sf[1] * sm[0] + 6 * sf[2] * sm[2]
    c = vm2(sf) - Y ** 2
    return (-b + np.sqrt(b * b - 4 * a * c)) / (2 * a)


def _laminate():
    al = Isotropic("liner", E=E_AL, nu=NU_AL, cte=A_AL, yield_strength=Y_AL).validate()
    cf = Orthotropic("hoop", E1=E1, E2=E2, G12=G12, nu12=NU12, alpha1=A1, alpha2=A2).validate()
    return Laminate("wall", (Ply(al, 0.0, T_LINER),) + (Ply(cf, 90.0, T_PLY),) * N_PLY)


def test_held_cool_down_is_not_scaled():
    cool, pressure, s_c, s_p = _vessel()
    expected = _von_mises_ratio(s_c, s_p, Y_AL)
    assert expected == pytest.approx(0.2925, abs=1e-4)
    tables = build_tables([build_section(_laminate())])
    one = dict(cell_sec=np.zeros(1, np.int64), phi_deg=np.zeros(1), dT=np.array([[DT]]), dM=np.zeros(1),
               pres=np.zeros(1), fos=np.ones(1))
    vm = (by_name("von-mises"),)
    env, _, plies = recover_cells(vm, tables, R=pressure[None, None], held=cool[None, None], store_plies=True, **one)
    np.testing.assert_allclose(env["strength_ratio"][0, 0], expected, rtol=1e-9)
    np.testing.assert_allclose(plies["stress"][0, 0, 0, 1], (s_c + s_p)[[0, 1, 2]], rtol=1e-9)
    # The rule without held cases: the free thermal stress held, the cool-down resultants scaled with the load.
    old, _, _ = recover_cells(vm, tables, R=(cool + pressure)[None, None], **one)
    assert old["strength_ratio"][0, 0] > 2.1 * expected


DEF = """
units = "N-mm"
[materials.liner]
kind = "isotropic"
E = 70000
nu = 0.33
alpha = 23e-6
yield_strength = 300
[materials.hoop]
E1 = 181000
E2 = 10300
G12 = 7170
nu12 = 0.28
alpha1 = 0.02e-6
alpha2 = 22.5e-6
[laminates.wall]
plies = [ {material = "liner", angle = 0, thickness = 1.5}, {material = "hoop", angle = 90, thickness = 0.5},
          {material = "hoop", angle = 90, thickness = 0.5}, {material = "hoop", angle = 90, thickness = 0.5},
          {material = "hoop", angle = 90, thickness = 0.5} ]
[analysis]
criteria = ["von-mises"]
[[zones]]
laminate = "wall"
[cases.cooldown]
step = 1
delta_T = -120
held = true
[cases.pressure]
step = 2
[combinations.operating]
factors = { cooldown = 1.0, pressure = 1.0 }
"""


def test_held_case_through_recover(tmp_path, write_definition):
    cool, pressure, s_c, s_p = _vessel()
    mesh = flat_plate(2, 1)
    write_mesh(tmp_path / "m.vtu", mesh)
    write_resultants_h5(tmp_path / "r.h5", ["cool", "pressure"], np.stack([np.tile(cool, (2, 1)),
                                                                          np.tile(pressure, (2, 1))]))
    out = tmp_path / "o.h5"
    proc = run_cli("recover", write_definition(DEF), tmp_path / "m.vtu", tmp_path / "r.h5", "-o", out, "--json",
                   "--quiet")
    assert proc.returncode == 0, proc.stderr
    summary = json.loads(proc.stdout)
    assert summary["held"] == {"cooldown": ["cooldown"], "operating": ["cooldown"]}
    with h5py.File(out) as h5:
        cm = h5["cells/case_margin"][0]
    from bridge.results.store import StoreReader

    with StoreReader(out) as st:
        meta = st.run
    # cooldown alone: nothing scales and the held state is safe (vm(σ_c) < Y): R = inf; pressure alone: σ_p only;
    # operating (limit, FoS 1.5): R from the held cool-down plus scaled pressure.
    assert np.isinf(cm[0])
    np.testing.assert_allclose(cm[1], _von_mises_ratio(np.zeros(3), s_p, Y_AL) / 1.5 - 1, rtol=1e-9)
    np.testing.assert_allclose(cm[2], _von_mises_ratio(s_c, s_p, Y_AL) / 1.5 - 1, rtol=1e-9)
    assert [c.held for c in meta.cases] == [("cooldown",), (), ("cooldown",)]
    assert [tuple((n.name, n.value) for n in c.held_steps) for c in meta.cases] == [
        (("cool", 1.0),), (), (("cool", 1.0),)]
    # The report says how each case is built (the held case's steps too) and why the held case has no margin.
    from postproc.report_inputs import inputs_section

    inputs = inputs_section(meta)
    assert "<td>held: step cool</td>" in inputs and "<td>step pressure</td>" in inputs
    assert "combination: 1 × cooldown + 1 × pressure" in inputs
    report = tmp_path / "r.html"
    proc = run_cli("report", out, "-o", report)
    assert proc.returncode == 0, proc.stderr
    html = report.read_text(encoding="utf-8")
    assert "No finite margin in cooldown (held: its resultants, pressure and ΔT are all fixed)" in html
    assert "a temperature change only)" not in html


def test_held_part_with_a_transverse_shear_field():
    # With transverse shear given as a field, the held part needs its own field: refused without it; with the
    # fields equal to F·(Qx, Qy) of each part (laminate axes, φ = 0) the result equals the Q-only path.
    from shells.errors import ResultantsError

    tables = build_tables([build_section(_laminate())])
    load = np.array([100.0, 50.0, 0.0, 5.0, -3.0, 0.0, 12.0, -4.0])
    held = np.array([30.0, 0.0, 10.0, -2.0, 1.0, 0.5, 6.0, 3.0])
    one = dict(cell_sec=np.zeros(1, np.int64), phi_deg=np.zeros(1), dT=np.array([[DT]]), dM=np.zeros(1),
               pres=np.zeros(1), fos=np.ones(1))
    vm = (by_name("von-mises"),)

    def field(r):
        return np.einsum("kqab,b->kqa", tables.F, r[6:])[None, None]

    base, _, p0 = recover_cells(vm, tables, R=load[None, None], held=held[None, None], store_plies=True, **one)
    with pytest.raises(ResultantsError, match="held cases"):
        recover_cells(vm, tables, R=load[None, None], held=held[None, None], shear=field(load), **one)
    env, _, p1 = recover_cells(vm, tables, R=load[None, None], held=held[None, None], shear=field(load),
                               held_shear=field(held), store_plies=True, **one)
    np.testing.assert_allclose(p1["transverse_shear"], p0["transverse_shear"], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(env["strength_ratio"], base["strength_ratio"], rtol=1e-12)
