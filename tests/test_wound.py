"""Wound ±angle layers kept as one homogenised layer, and ply angles taken from per-cell mesh arrays.

Check values: the 60° lamina of Kaw, *Mechanics of Composite Materials*, 2nd ed. (2006), Example 2.6 (Q̄, from
memory, re-derived here), netting analysis of a filament-wound cylinder (common practice: fibres alone carry the
load; tan²α = 2 under the 2:1 hoop-to-axial resultants of a closed cylinder), and a lamination calculation written
in this file (Kaw 2006, eqs. 2.103–2.104 and 4.28–4.29, the lamina transformation and the A matrix).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from bridge.compare.run import load_inputs
from bridge.definition.loader import load_definition
from bridge.results.store import StoreReader
from shells.errors import InputError
from shells.laminate import Laminate, Ply, section_properties
from shells.materials import Orthotropic
from tests.common import KAW_PLY_TOML, recover_once
from tests.meshes import flat_plate

KAW = Orthotropic("kaw", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28).validate()


def _strain_to_ply(deg: float) -> np.ndarray:
    """ε_12 (engineering shear) of ε_xy for a ply at ``deg`` (Kaw 2006, eq. 2.103 with the Reuter matrix)."""
    c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
    return np.array([[c * c, s * s, c * s], [s * s, c * c, -c * s], [-2 * c * s, 2 * c * s, c * c - s * s]])


def _q(e1, e2, g12, nu12) -> np.ndarray:
    d = 1.0 - nu12 * nu12 * e2 / e1
    return np.array([[e1 / d, nu12 * e2 / d, 0.0], [nu12 * e2 / d, e2 / d, 0.0], [0.0, 0.0, g12]])


def _qbar(q: np.ndarray, deg: float) -> np.ndarray:
    """Q̄ = Tεᵀ Q Tε (energy: σ_xy·ε_xy = σ_12·ε_12)."""
    T = _strain_to_ply(deg)
    return T.T @ q @ T


def test_a_wound_layer_is_the_mean_of_its_two_directions():
    # Kaw (2006), Example 2.6 (from memory): Q̄ of the 60° lamina, GPa: 11 23.65, 12 32.46, 16 20.05, 22 109.4,
    # 26 54.19, 66 36.74. A wound ±60° layer: the 16 and 26 terms cancel; B = 0 and D = t³/12 Q̄ about its
    # mid-plane, so no bending-twist coupling, where the same plies split as [60/−60] couple (B16 ≠ 0).
    t = 1.0
    sp = section_properties(Laminate("w", (Ply(KAW, 60.0, t, wound=True),)))
    want = np.array([[23.65, 32.46, 0.0], [32.46, 109.4, 0.0], [0.0, 0.0, 36.74]]) * 1e3
    np.testing.assert_allclose(sp.A, want * t, rtol=2e-3, atol=1e-9)
    np.testing.assert_allclose(sp.D, want * t ** 3 / 12, rtol=2e-3, atol=1e-9)
    assert np.abs(sp.B).max() < 1e-9 * np.abs(sp.A).max()
    split = section_properties(Laminate("s", (Ply(KAW, 60.0, t / 2), Ply(KAW, -60.0, t / 2))))
    np.testing.assert_allclose(split.A, sp.A, rtol=1e-12, atol=1e-9)
    assert abs(split.B[0, 2]) > 1.0                   # the artificial coupling the homogenised layer avoids
    # The mean of Q̄(+60) and Q̄(−60) from the transformation written here.
    mean = 0.5 * (_qbar(KAW.Q(), 60.0) + _qbar(KAW.Q(), -60.0))
    np.testing.assert_allclose(sp.A, mean * t, rtol=1e-12, atol=1e-9)


NETTING = ('units = "N-mm"\n[materials.fibre]\n'
           + KAW_PLY_TOML.replace('E2 = "10.3 GPa"', 'E2 = "0.181 MPa"')
                         .replace('G12 = "7.17 GPa"', 'G12 = "0.181 MPa"')
           + """thickness = 1.0
[laminates.wound]
plies = [{material = "fibre", angle = {field = "wind"}, wound = true}]
[analysis]
criteria = ["max-stress"]
check_ranges = false
[[zones]]
laminate = "wound"
""")


def test_netting_angle_of_a_closed_cylinder(tmp_path):
    # A wound ±α layer of fibres in a matrix a million times softer, axial Nx = N and hoop Ny = 2 N. Netting
    # analysis (common practice): each fibre carries σ1 = Nx / (t cos²α) = Ny / (t sin²α), which needs
    # tan²α = 2 (α = 54.74°), then σ1 = 3 N / t in the +α and the −α fibres alike, σ2 = τ12 = 0.
    alpha = math.degrees(math.atan(math.sqrt(2.0)))
    mesh = dataclasses.replace(flat_plate(2, 1), cell_data={"wind": np.array([alpha, -alpha])})
    R = np.zeros((1, 1, 8))
    R[0, 0, :2] = 100.0, 200.0
    _, out = recover_once(tmp_path, NETTING, R, mesh, store_plies=True)
    with StoreReader(out) as st:
        stress = st.array("plies/stress")[0]                 # (ncell, ply row, point, component)
        wound = [p.wound for p in st.run.sections[0].plies]
    assert wound == [1, -1]
    np.testing.assert_allclose(stress[..., 0], 300.0, rtol=1e-4)
    assert np.abs(stress[..., 1:]).max() < 1e-4 * 300.0          # the matrix carries next to nothing


WOUND_KAW = f"""units = "N-mm"
[materials.cf]
{KAW_PLY_TOML}thickness = 0.25
[laminates.w]
plies = [{{material = "cf", angle = {{field = "wind"}}, wound = true, thickness = 1.0}},
         {{material = "cf", angle = 0}}]
[analysis]
criteria = ["max-stress"]
[[zones]]
laminate = "w"
"""


def test_wound_ply_stresses_against_a_lamination_calculation(tmp_path):
    # A wound ±θ layer (1 mm) under a 0° ply (0.25 mm), θ from a cell array: A, B, D of the two layers from the
    # transformation written here, strains ε0 + z κ, and each fibre direction's stresses Q Tε(±θ) ε at the
    # wound layer's bottom, middle and top; the 0° ply alike.
    angles = np.array([25.0, 40.0, 70.0])
    mesh = dataclasses.replace(flat_plate(3, 1), cell_data={"wind": angles})
    load = np.array([120.0, -40.0, 30.0, 6.0, -2.0, 1.5, 0.0, 0.0])
    _, out = recover_once(tmp_path, WOUND_KAW, load[None, None, :], mesh, store_plies=True)
    with StoreReader(out) as st:
        stress = st.array("plies/stress")[0]
    q = _q(181e3, 10.3e3, 7.17e3, 0.28)
    z = np.array([-0.625, 0.375, 0.625])
    for cell, theta in enumerate(angles):
        layers = [0.5 * (_qbar(q, theta) + _qbar(q, -theta)), q]
        abd = np.zeros((6, 6))
        for k, Qb in enumerate(layers):
            zb, zt = z[k], z[k + 1]
            for a, w in ((slice(0, 3), zt - zb), (slice(3, 6), (zt ** 3 - zb ** 3) / 3)):
                abd[a, a] += w * Qb
            abd[:3, 3:] += (zt ** 2 - zb ** 2) / 2 * Qb
        abd[3:, :3] = abd[:3, 3:].T
        e = np.linalg.solve(abd, load[:6])
        points = {0: (z[0], 0.5 * (z[0] + z[1]), z[1]), 2: (z[1], 0.5 * (z[1] + z[2]), z[2])}
        for row, ply_angle, zs in ((0, theta, points[0]), (1, -theta, points[0]), (2, 0.0, points[2])):
            for j, zz in enumerate(zs):
                want = q @ _strain_to_ply(ply_angle) @ (e[:3] + zz * e[3:])
                np.testing.assert_allclose(stress[cell, row, j], want, rtol=1e-9, atol=1e-9 * np.abs(want).max())


FIELD_LAMINATE = f"""units = "N-mm"
[materials.cf]
{KAW_PLY_TOML}thickness = 0.125
[laminates.turned]
plies = [{{material = "cf", angle = {{field = "wind"}}}}, {{material = "cf", angle = {{field = "wind", sign = -1}}}},
         {{material = "cf", angle = 0}}, {{material = "cf", angle = {{field = "wind", sign = -1}}}},
         {{material = "cf", angle = {{field = "wind"}}}}]
[analysis]
criteria = ["max-stress", "tsai-wu"]
[[zones]]
laminate = "turned"
"""


def test_angle_fields_equal_the_laminates_turned_by_hand(tmp_path):
    # Every cell of a field laminate recovers exactly as the fixed laminate [θ/−θ/0/−θ/θ] with that cell's θ:
    # the +θ plies follow the field, the −θ plies turn the opposite way.
    angles = np.array([15.0, 35.0, 62.5, -20.0])
    mesh = dataclasses.replace(flat_plate(4, 1), cell_data={"wind": angles})
    load = np.array([[80.0, 25.0, -30.0, 3.0, 1.0, -2.0, 0.5, 0.2]])[:, None, :]
    _, out = recover_once(tmp_path, FIELD_LAMINATE, load, mesh, store_plies=True)
    with StoreReader(out) as st:
        stress, ratio = st.array("plies/stress")[0], st.array("cells/strength_ratio")
        names = [s.name for s in st.run.sections]
    assert names == [f"turned[wind={a:g}°]" for a in np.sort(angles)]
    for cell, theta in enumerate(angles):
        fixed = FIELD_LAMINATE.replace('{field = "wind", sign = -1}', str(-theta)).replace('{field = "wind"}',
                                                                                           str(theta))
        (tmp_path / f"c{cell}").mkdir()
        _, out1 = recover_once(tmp_path / f"c{cell}", fixed, load, flat_plate(4, 1), store_plies=True)
        with StoreReader(out1) as st:
            np.testing.assert_allclose(stress[cell], st.array("plies/stress")[0, cell], rtol=1e-12, atol=1e-12)
            np.testing.assert_allclose(ratio[cell], st.array("cells/strength_ratio")[cell], rtol=1e-12)


def test_a_wound_layer_fails_progressively_as_the_split_symmetric_one(tmp_path):
    # Under in-plane loads a wound ±θ layer and the split symmetric [θ/−θ]s have the same A and no B, so the
    # ply discount sees the same strains: equal first- and last-ply factors.
    common = f"""units = "N-mm"
[materials.cf]
{KAW_PLY_TOML}thickness = 0.25
[analysis]
criteria = ["max-stress"]
[analysis.progressive]
[[zones]]
laminate = "l"
"""
    wound = common + '[laminates.l]\nplies = [{material = "cf", angle = 35, wound = true, thickness = 1.0}]\n'
    split = common + '[laminates.l]\nlayup = "[35/-35]s"\nmaterial = "cf"\n'
    R = np.array([[[150.0, 20.0, 0, 0, 0, 0, 0, 0]]])
    factors = []
    for k, defn in enumerate((wound, split)):
        (tmp_path / str(k)).mkdir()
        _, out = recover_once(tmp_path / str(k), defn, R)
        with StoreReader(out) as st:
            factors.append((st.array("cells/first_ply_factor")[0, 0], st.array("cells/last_ply_factor")[0, 0]))
    np.testing.assert_allclose(factors[0], factors[1], rtol=1e-9)
    assert np.isfinite(factors[0]).all() and factors[0][1] >= factors[0][0]


@pytest.mark.parametrize("ply, needle", [
    ('{material = "cf", angle = {field = "wind", sign = 2}}', "use 1 or -1"),
    ('{material = "cf", angle = {field = ""}}', "per-cell angle array"),
    ('{material = "cf", angle = {name = "wind"}}', "angle"),
    ('{material = "al", angle = 30, wound = true}', "orthotropic material"),
])
def test_refusals_in_the_definition(tmp_path, ply, needle):
    defn = FIELD_LAMINATE.replace("[laminates.turned]", """[materials.al]
kind = "isotropic"
E = "70 GPa"
nu = 0.3
thickness = 1.0
[laminates.turned]""")
    defn = defn[:defn.index("plies = [")] + f"plies = [{ply}]\n" + defn[defn.index("[analysis]"):]
    (tmp_path / "d.toml").write_text(defn, encoding="utf-8")
    with pytest.raises(InputError, match=needle):
        load_definition(str(tmp_path / "d.toml"))


def test_a_missing_or_wrong_angle_array_is_refused(tmp_path):
    for data, needle in (({}, "lacks"), ({"wind": np.array([10.0, 400.0])}, "within ±360")):
        mesh = dataclasses.replace(flat_plate(2, 1), cell_data=data)
        with pytest.raises(InputError, match=needle):
            recover_once(tmp_path, FIELD_LAMINATE, np.zeros((1, 1, 8)), mesh)


def test_compare_refuses_wound_layers(tmp_path):
    mesh = dataclasses.replace(flat_plate(2, 1), cell_data={"wind": np.array([30.0, 30.0])})
    recover_once(tmp_path, NETTING, np.zeros((1, 1, 8)), mesh)
    with pytest.raises(InputError, match="wound"):
        load_inputs(str(tmp_path / "d.toml"), str(tmp_path / "m.vtu"), [str(tmp_path / "r.h5")], [])


def test_section_lists_a_wound_ply_as_plus_minus(tmp_path):
    from tests.common import run_cli

    (tmp_path / "d.toml").write_text(WOUND_KAW.replace('{field = "wind"}', "55"), encoding="utf-8")
    proc = run_cli("section", tmp_path / "d.toml")
    assert proc.returncode == 0, proc.stderr
    assert "ply\tw\t1\tcf\t55.0\t1.0\t-0.625\t0.375\twound\n" in proc.stdout
    assert "\twound" not in proc.stdout.split("ply\tw\t2")[1].splitlines()[0]
    proc = run_cli("section", tmp_path / "d.toml", "--table")
    assert proc.returncode == 0, proc.stderr
    assert "±55.00" in proc.stdout
