"""More built-in check cases: coupled stacks, thermal resultants and held-thermal ratios, isotropic layers,
sandwich sections. Part of the one list ``plybridge verify`` and the tests run (:data:`SECTION_CASES`).

Each expected value is either a published figure (recalled, re-derived) or the result of a closed form written
out in the comment beside it and re-derived independently in tests/test_published_closed_forms.py. Units: MPa,
mm, N. Material: graphite/epoxy of Kaw (2006), Table 2.1, with α1 = 0.02e-6, α2 = 22.5e-6 per °C.
"""

from __future__ import annotations

import math
from typing import Callable

import numpy as np

from . import params as P
from .criteria import MaxStress, VonMises
from .laminate import Laminate, Ply, section_properties
from .materials import Core, Isotropic, Orthotropic
from .published import KAW_BOOK, Published
from .recovery_reference import ply_states
from .recovery_tables import build_tables
from .section import build_section

KAW_THERMAL = f"{KAW_BOOK}, ch. 4 (hygrothermal loads): closed form for a cross-ply, re-derived"
CLOSED_FORM = "classical lamination, closed form (common practice), re-derived"
ALLEN = "Allen, Analysis and Design of Structural Sandwich Panels, 1969 (from memory, re-derived)"
HOFF = "Hoff & Mautner, J. Aeronaut. Sci. 12 (1945) 285, design coefficient 0.5 (from memory)"


def kaw_thermal() -> Orthotropic:
    """Kaw (2006) Table 2.1 graphite/epoxy with its expansion coefficients and strengths, MPa."""
    return Orthotropic("kaw-table-2.1", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, alpha1=0.02e-6,
                       alpha2=22.5e-6, Xt=1500, Xc=1500, Yt=40, Yc=246, S12=68).validate()


def aluminium() -> Isotropic:
    return Isotropic("aluminium", E=70e3, nu=0.33, yield_strength=270.0, Xt=400.0, Xc=400.0, S12=230.0).validate()


def _kaw_42(which: str, i: int, j: int, scale: float) -> Callable[[], float]:
    def run() -> float:
        sp = section_properties(Laminate("k", tuple(Ply(kaw_thermal(), a, 5.0) for a in (0, 30, -45))))
        return float(getattr(sp, which)[i, j] / scale)
    return run


def _states(lam: Laminate, N, dT: float = 0.0, shear_method: str = "equilibrium"):
    sec = build_section(lam, shear_method)
    R = np.zeros((1, 1, 8))
    R[0, 0] = N
    return sec, ply_states(build_tables([sec]), np.zeros(1, int), np.zeros(1), R, np.full((1, 1), dT))


def _coupled_stress(ply: int, point: int, comp: int) -> Callable[[], float]:
    def run() -> float:
        lam = Laminate("cp", (Ply(kaw_thermal(), 0.0, 0.25), Ply(kaw_thermal(), 90.0, 0.25)))
        _, st = _states(lam, [100.0, 0, 0, 0, 0, 0, 0, 0])
        return float(st["stress"][0, 0, ply, point, comp])
    return run


def _cross_ply() -> Laminate:
    return Laminate("xp", tuple(Ply(kaw_thermal(), a, 0.125) for a in (0, 90, 90, 0)))


def _thermal_nt() -> float:
    return float(section_properties(_cross_ply()).NT[0])


def _thermal_stress(comp: int) -> Callable[[], float]:
    def run() -> float:
        _, st = _states(_cross_ply(), np.zeros(8), dT=-75.0)
        return float(st["stress"][0, 0, 0, 1, comp])
    return run


def _held_ratio() -> float:
    """Lowest max-stress ratio over plies and points of the cross-ply, Nx = 50 N/mm, cool-down held."""
    sec, st = _states(_cross_ply(), [50.0, 0, 0, 0, 0, 0, 0, 0], dT=-75.0)
    p = sec.ply_params
    return min(float(MaxStress.ratio(st["mech"][0, 0, k, q], st["fixed"][0, 0, k, q], p[k])[0])
               for k in range(4) for q in range(3))


def _von_mises() -> float:
    lam = Laminate("al", (Ply(aluminium(), 25.0, 2.0),))          # the layer's angle must not matter
    sec, st = _states(lam, [200.0, -100.0, 60.0, 0, 0, 0, 0, 0])
    return float(VonMises.ratio(st["mech"][0, 0, 0, 1], st["fixed"][0, 0, 0, 1], sec.ply_params[0])[0])


def _core() -> Core:
    return Core("core", G13=40.0, G23=20.0, Ez=130.0, S13=1.2, S23=0.7).validate()


def _sandwich() -> Laminate:
    al, core = aluminium(), _core()
    return Laminate("sw", (Ply(al, 0.0, 0.5), Ply(core, 0.0, 10.0), Ply(al, 0.0, 0.5)))


def _core_shear() -> float:
    """τxz at the middle of the core under Qx = 100 N/mm."""
    sec = build_section(_sandwich())
    return float((sec.shear_F[1, 1] @ np.array([100.0, 0.0]))[0])


def _wrinkling() -> float:
    return float(build_section(_sandwich()).ply_params[0, P.WRINKLING])


SECTION_CASES: tuple[Published, ...] = (
    # Kaw (2006) Example 4.2: [0/30/-45], 5 mm plies: A11 = 1.739e9 Pa·m, A12 = 3.884e8 Pa·m,
    # B11 = -3.129e6 Pa·m² (from memory; re-derived: A11 = Σ Q̄11 t, B11 = Σ Q̄11 (z_t² − z_b²)/2).
    Published("kaw-4.2-A11", f"{KAW_BOOK}, Example 4.2 [0/30/-45] (from memory, re-derived)", "A11 (1e9 Pa·m)",
              1.739, 2e-3, _kaw_42("A", 0, 0, 1e6)),
    Published("kaw-4.2-A12", f"{KAW_BOOK}, Example 4.2 [0/30/-45] (from memory, re-derived)", "A12 (1e9 Pa·m)",
              0.3884, 2e-3, _kaw_42("A", 0, 1, 1e6)),
    Published("kaw-4.2-B11", f"{KAW_BOOK}, Example 4.2 [0/30/-45] (from memory, re-derived)", "B11 (1e6 Pa·m²)",
              -3.129, 2e-3, _kaw_42("B", 0, 0, 1e6)),
    # Unsymmetric [0/90], 0.25 mm plies, Nx = 100 N/mm: the 4 × 4 system [A B; B D] of a cross-ply solved by hand.
    Published("coupled-0-90-s1", CLOSED_FORM, "[0/90] Nx 100 N/mm: σ1 bottom of the 0° ply (MPa)", -319.17, 1e-4,
              _coupled_stress(0, 0, 0)),
    Published("coupled-0-90-s2", CLOSED_FORM, "[0/90] Nx 100 N/mm: σ2 top of the 90° ply (MPa)", 124.85, 1e-4,
              _coupled_stress(1, 2, 1)),
    # [0/90]s, 0.125 mm plies: N_T,x = 2t[(Q11 + Q12)α1 + (Q12 + Q22)α2]; cool-down ΔT = -75 °C: free strain
    # ε0 = [(Q11 + Q12)α1 + (Q12 + Q22)α2] / (Q11 + Q22 + 2Q12) ΔT, residual stress Q(ε0 − αΔT) in the 0° ply.
    Published("thermal-NT", KAW_THERMAL, "[0/90]s N_T,x (N/mm per °C)", 0.075416, 1e-4, _thermal_nt),
    Published("thermal-s1", KAW_THERMAL, "[0/90]s ΔT -75 °C: σ1 of the 0° ply (MPa)", -15.950, 1e-4,
              _thermal_stress(0)),
    Published("thermal-s2", KAW_THERMAL, "[0/90]s ΔT -75 °C: σ2 of the 0° ply (MPa)", 15.950, 1e-4,
              _thermal_stress(1)),
    # Held thermal stress: R = (Yt − σ2_thermal)/σ2_mech in the 90° plies (matrix tension governs).
    Published("held-thermal-ratio", KAW_THERMAL, "[0/90]s Nx 50 N/mm, ΔT -75 °C held: max-stress ratio", 2.2504,
              1e-4, _held_ratio),
    # Isotropic layer (aluminium, 2 mm at 25°) under N = (200, -100, 60) N/mm: σ = N/h, R = Y/σ_vm,
    # σ_vm² = σx² − σxσy + σy² + 3τxy² (von Mises 1913, common practice): 270/sqrt(20200).
    Published("isotropic-von-mises", "von Mises equivalent stress, closed form (common practice)",
              "von Mises ratio, Y 270 MPa", 270.0 / math.sqrt(20200.0), 1e-9, _von_mises),
    # Sandwich, faces 0.5 mm aluminium, core 10 mm (no in-plane stiffness), Qx = 100 N/mm: core shear
    # τ = Q/D · Ef tf d/2 with D = Ef (tf d²/2 + tf³/6), d = 10.5 mm (Allen 1969; ≈ Q/d = 9.524).
    Published("sandwich-core-shear", ALLEN, "core τxz at mid-core, Qx 100 N/mm (MPa)", 9.5166, 1e-4, _core_shear),
    # Face wrinkling allowable 0.5·(Ef·Ez·Gc)^(1/3), Ef 70 GPa, Ez 130 MPa, Gc = min(G13, G23) = 20 MPa.
    Published("sandwich-wrinkling", HOFF, "face wrinkling allowable (MPa)", 283.35, 1e-4, _wrinkling),
)
