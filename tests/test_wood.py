"""Wood layers: an orthotropic solid with its grain in the plane (flat grain) or along the normal (end grain).

Balsa in the ratios of the Forest Products Laboratory, *Wood Handbook* (2010), tables 5-1 and 5-2 (from memory):
E_R/E_L 0.046, E_T/E_L 0.015, G_LR/E_L 0.054, G_LT/E_L 0.037, G_RT/E_L 0.005, ν_LR 0.229, ν_LT 0.488,
ν_RT 0.665. Check values are closed forms written here: plane-stress stiffness of an orthotropic solid, the 5/6
shear stiffness of a homogeneous layer (parabolic shear, Reissner 1945), the shear stiffness G_c d²/c and the core
shear stress Q/d of a sandwich with thin faces (Allen, *Analysis and Design of Structural Sandwich Panels*, 1969,
from memory), and strength ratios from stresses computed here.
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.definition.loader import load_definition
from bridge.results.store import StoreReader
from shells.errors import InputError, MaterialError
from shells.laminate import Laminate, Ply
from shells.materials import Isotropic
from shells.section import build_section
from shells.wood import Wood
from tests.common import recover_once

EL = 4000.0                                     # MPa: balsa of about 160 kg/m³
BALSA = dict(E_L=EL, E_R=0.046 * EL, E_T=0.015 * EL, G_LR=0.054 * EL, G_LT=0.037 * EL, G_RT=0.005 * EL,
             nu_LR=0.229, nu_LT=0.488, nu_RT=0.665)
STRENGTHS = dict(tension_parallel=13.0, compression_parallel=12.0, tension_perpendicular=0.5,
                 compression_perpendicular=0.8, shear_parallel=3.0, rolling_shear=0.5)
AL = Isotropic("al", E=70e3, nu=0.33, Xt=400.0, Xc=400.0, S12=230.0).validate()


def _plane_stress(e1, e2, g12, nu12):
    nu21 = nu12 * e2 / e1
    d = 1.0 - nu12 * nu21
    return np.array([[e1 / d, nu12 * e2 / d, 0.0], [nu12 * e2 / d, e2 / d, 0.0], [0.0, 0.0, g12]])


def test_in_plane_and_transverse_stiffness_of_each_grain():
    end = Wood("b", grain="end", **BALSA).validate()
    flat = Wood("v", grain="flat", **BALSA).validate()
    # End grain: the plane is R (1) and T (2); the normal is L.
    np.testing.assert_allclose(end.Q(), _plane_stress(BALSA["E_R"], BALSA["E_T"], BALSA["G_RT"], BALSA["nu_RT"]),
                               rtol=1e-12)
    assert end.G_transverse() == (BALSA["G_LR"], BALSA["G_LT"])
    # Flat grain: the plane is L (1) and T (2); the normal is R.
    np.testing.assert_allclose(flat.Q(), _plane_stress(EL, BALSA["E_T"], BALSA["G_LT"], BALSA["nu_LT"]), rtol=1e-12)
    assert flat.G_transverse() == (BALSA["G_LR"], BALSA["G_RT"])


def test_end_grain_shear_stiffness_and_the_isotropic_overstatement():
    end = Wood("b", grain="end", **BALSA).validate()
    # A single homogeneous layer: H = 5/6 G t in each direction.
    H = build_section(Laminate("c", (Ply(end, 0.0, 10.0),))).H
    np.testing.assert_allclose(np.diag(H), [5 / 6 * 10 * BALSA["G_LR"], 5 / 6 * 10 * BALSA["G_LT"]], rtol=1e-12)
    # A sandwich of 0.5 mm aluminium faces on a 20 mm core: H = G_c d²/c with d = c + t_f (thin faces).
    tf, c = 0.5, 20.0
    d = c + tf
    H = build_section(Laminate("s", (Ply(AL, 0.0, tf), Ply(end, 0.0, c), Ply(AL, 0.0, tf)))).H
    np.testing.assert_allclose(np.diag(H), [BALSA["G_LR"] * d * d / c, BALSA["G_LT"] * d * d / c], rtol=1e-3)
    # The same balsa taken as isotropic (E = E_L, ν = 0.3): G = E_L / 2.6, 7 and 10 times G_LR and G_LT (an
    # isotropic core this stiff in the plane carries part of the bending itself: H a few % below G d²/c).
    iso = Isotropic("balsa as isotropic", E=EL, nu=0.3).validate()
    H_iso = build_section(Laminate("s", (Ply(AL, 0.0, tf), Ply(iso, 0.0, c), Ply(AL, 0.0, tf)))).H
    over = np.diag(H_iso) / np.diag(H)
    np.testing.assert_allclose(over, [1 / (2.6 * 0.054), 1 / (2.6 * 0.037)], rtol=0.04)
    assert 8.0 < np.sqrt(over.prod()) < 9.0                  # about 8 times, as found on a bulkhead


SANDWICH = """units = "N-mm"
[materials.al]
kind = "isotropic"
E = "70 GPa"
nu = 0.33
Xt = 400
Xc = 400
S12 = 230
thickness = 0.5
[materials.balsa]
kind = "wood"
grain = "end"
E_L = "4 GPa"
E_R = "184 MPa"
E_T = "60 MPa"
G_LR = "216 MPa"
G_LT = "148 MPa"
G_RT = "20 MPa"
nu_LR = 0.229
nu_LT = 0.488
nu_RT = 0.665
tension_parallel = 13
compression_parallel = 12
tension_perpendicular = 0.5
compression_perpendicular = 0.8
shear_parallel = 3.0
rolling_shear = 0.5
thickness = 20
[laminates.panel]
layup = "[0:al/0:balsa/0:al]"
[analysis]
criteria = ["max-stress", "core-shear", "core-crushing"]
[cases.suction]
step = 1
pressure = -0.2
[cases.crush]
step = 1
pressure = 0.3
[cases.shear]
step = 2
[cases.stretch]
step = 3
[[zones]]
laminate = "panel"
"""


def test_end_grain_core_strengths_through_recover(tmp_path):
    R = np.zeros((3, 1, 8))
    R[1, 0, 6] = 30.0                                            # Qx, N/mm
    R[2, 0, 0] = 100.0                                           # Nx, N/mm
    _, out = recover_once(tmp_path, SANDWICH, R, names=["s1", "s2", "s3"])
    with StoreReader(out) as st:
        ratio = st.array("cells/case_margin")[0] * 1.5 + 1.5      # limit cases: MS = R/1.5 − 1
        critical_ply = st.array("cells/critical_ply")[0]
    # Suction 0.2 MPa: σ3 = +0.2 along the grain against tension_parallel 13; pressure 0.3 against 12.
    np.testing.assert_allclose(ratio[0], 13.0 / 0.2, rtol=1e-9)
    np.testing.assert_allclose(ratio[1], 12.0 / 0.3, rtol=1e-9)
    # Qx = 30 N/mm: the core carries about τ = Q/d (thin faces), d = 20.5 mm, against 3.0 MPa; exactly, at the
    # mid-plane, τ = Qx ∫ (Q̄11 d11 + Q̄12 d21) z dz over the lower half (equilibrium ∂σx/∂x + ∂τxz/∂z = 0 under
    # ∂Mx/∂x = Qx, d = D⁻¹; Rolfes & Rohwer 1997), its in-plane modulus E_R taking a little of the bending.
    q_al = _plane_stress(70e3, 70e3, 70e3 / 2.66, 0.33)
    q_core = _plane_stress(184.0, 60.0, 20.0, 0.665)
    layers = ((q_al, -10.5, -10.0), (q_core, -10.0, 10.0), (q_al, 10.0, 10.5))
    D = sum(q * (zt ** 3 - zb ** 3) / 3 for q, zb, zt in layers)
    dinv = np.linalg.inv(D)
    tau = -30.0 * sum((q[0, 0] * dinv[0, 0] + q[0, 1] * dinv[1, 0]) * (min(zt, 0.0) ** 2 - zb ** 2) / 2
                      for q, zb, zt in layers if zb < 0.0)
    np.testing.assert_allclose(tau, 30.0 / 20.5, rtol=0.02)
    np.testing.assert_allclose(ratio[2], 3.0 / tau, rtol=1e-9)
    # Nx = 100 N/mm: equal strains in faces and core, ε = A⁻¹ N with A from the stiffnesses written here; the
    # core's stresses across the grain against tension_perpendicular, compression_perpendicular, rolling_shear.
    eps = np.linalg.solve(2 * 0.5 * q_al + 20.0 * q_core, [100.0, 0.0, 0.0])
    s = q_core @ eps
    want = min(0.5 / s[0], 0.8 / -s[1] if s[1] < 0 else 0.5 / s[1])
    np.testing.assert_allclose(ratio[3], want, rtol=1e-9)
    assert critical_ply == 2                                   # the core (ply 2, counted from 1) governs


def test_wood_refusals(tmp_path):
    with pytest.raises(MaterialError, match="grain"):
        Wood("w", grain="quarter", **BALSA).validate()
    with pytest.raises(MaterialError, match="positive definite"):
        Wood("w", grain="end", **{**BALSA, "nu_RT": 2.5}).validate()
    with pytest.raises(MaterialError, match="together"):
        Wood("w", grain="end", **BALSA, tension_perpendicular=0.5).validate()
    (tmp_path / "d.toml").write_text(SANDWICH.replace('grain = "end"\n', ""), encoding="utf-8")
    with pytest.raises(InputError, match="grain"):
        load_definition(str(tmp_path / "d.toml"))
    (tmp_path / "d.toml").write_text(SANDWICH.replace('E_L = "4 GPa"', 'E_L = "4 MPa"'), encoding="utf-8")
    with pytest.raises(InputError, match="E_L"):
        load_definition(str(tmp_path / "d.toml"))


def test_flat_grain_ply_through_the_definition(tmp_path):
    # A 3-veneer plywood [0/90/0] of flat-grain wood: A from the ply stiffnesses (E1 = E_L, E2 = E_T, ν12 = ν_LT,
    # G12 = G_LT) turned by hand, each veneer 1 mm.
    defn = SANDWICH.replace('grain = "end"', 'grain = "flat"').replace("thickness = 20", "thickness = 1")
    defn = defn.replace('layup = "[0:al/0:balsa/0:al]"', 'layup = "[0/90/0]"\nmaterial = "balsa"')
    (tmp_path / "d.toml").write_text(defn, encoding="utf-8")
    from bridge.model.sections import section_of

    sec = section_of(load_definition(str(tmp_path / "d.toml")), "panel")
    q = _plane_stress(4000.0, 60.0, 148.0, 0.488)
    q90 = q[[1, 0, 2]][:, [1, 0, 2]]
    np.testing.assert_allclose(sec.props.A, 2 * q + q90, rtol=1e-12, atol=1e-9)
