"""The built-in published check cases: one list, run by ``plybridge verify`` and by the tests.

Each :class:`Published` case names its source (author, title, year, example or table), the quantity, the
expected value, a relative tolerance and a function computing the value with the project's own ``shells``
API. Values marked "from memory" were recalled and re-derived independently;
the tolerances allow for the rounding of the published figures. Units: MPa and mm; the quantities in GPa are
divided by 1000 before comparison. Sources whose z points the other way are compared in magnitude.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from .criteria import MaxStrain, MaxStress, TsaiHill, TsaiWu
from .engineering import membrane_constants
from .laminate import Laminate, Ply, section_properties
from .materials import Orthotropic
from .navier import plate_fields, resultants
from .ply_defaults import StrainLimits
from .recovery_reference import ply_states
from .recovery_tables import build_tables
from .rotation import rotate_plane_stiffness, stress_to_rotated
from .section import build_section
from .shear import equilibrium_shear, shear_correction_factors, shear_distribution

KAW_BOOK = "Kaw, Mechanics of Composite Materials, 2nd ed., CRC 2006"
TSAI_HAHN = "Tsai & Hahn, Introduction to Composite Materials, 1980 (from memory, re-derived)"
PAGANO = "Pagano, J. Composite Materials 4 (1970) 20-34, [0/90/90/0] thin limit (from memory, re-derived)"
ROLFES = "Rolfes & Rohwer, Int. J. Numer. Meth. Engng 40 (1997) 51-60"


@dataclass(frozen=True)
class Published:
    """One published check value.

    Attributes
    ----------
    case : str
        Short identifier.
    source : str
        Author, title, year and example or table.
    quantity : str
        What is compared, with its unit.
    expected : float
    tolerance : float
        Largest relative error accepted.
    compute : callable () -> float
        Computes the quantity with the shells API.
    """

    case: str
    source: str
    quantity: str
    expected: float
    tolerance: float
    compute: Callable[[], float]


def kaw_material() -> Orthotropic:
    """Graphite/epoxy of Kaw (2006), Table 2.1, MPa; strain allowables strength/modulus as Kaw takes them."""
    return Orthotropic("kaw-table-2.1", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40,
                       Yc=246, S12=68, strain_limits=StrainLimits(1500 / 181e3, 1500 / 181e3, 40 / 10.3e3,
                                                                246 / 10.3e3, 68 / 7.17e3)).validate()


def pagano_material() -> Orthotropic:
    """Pagano (1970): E_L/E_T 25, G_LT/E_T 0.5, G_TT/E_T 0.2, nu 0.25 (E_T = 1)."""
    return Orthotropic("pagano-1970", E1=25.0, E2=1.0, G12=0.5, nu12=0.25, G13=0.5, G23=0.2).validate()


def _q(i: int, j: int) -> Callable[[], float]:
    return lambda: float(kaw_material().Q()[i, j] / 1e3)


def _qbar60(i: int, j: int) -> Callable[[], float]:
    return lambda: float(rotate_plane_stiffness(kaw_material().Q(), 60.0)[i, j] / 1e3)


def _constant(angles, key: str, scale: float) -> Callable[[], float]:
    def run() -> float:
        lam = Laminate("lam", tuple(Ply(kaw_material(), a, 0.125) for a in angles))
        return float(membrane_constants(section_properties(lam))[key] / scale)
    return run


def _ratio(criterion) -> Callable[[], float]:
    def run() -> float:
        sm = np.concatenate([stress_to_rotated(np.array([2.0, -3.0, 4.0]), 60.0), np.zeros(3)])
        return float(criterion.ratio(sm, np.zeros(6), kaw_material().params())[0])
    return run


def _pagano_section():
    return build_section(Laminate("pagano", tuple(Ply(pagano_material(), a, 0.25) for a in (0, 90, 90, 0))))


S_THIN = 100.0


def _pagano_fields(x: float, y: float, dx: float = 0.0, dy: float = 0.0) -> dict:
    a = S_THIN  # h = 1
    return plate_fields(_pagano_section().props.D, None, a, a, np.array([x * a + dx]), np.array([y * a + dy]),
                        load="sine")


def _pagano_stress(x: float, y: float, ply: int, point: int, comp: int) -> Callable[[], float]:
    def run() -> float:
        sec = _pagano_section()
        st = ply_states(build_tables([sec]), np.zeros(1, int), np.zeros(1), resultants(_pagano_fields(x, y))[None],
                        np.zeros((1, 1)))
        return float(abs(st["stress"][0, 0, ply, point, comp]) / S_THIN ** 2)
    return run


def _pagano_deflection() -> float:
    return float(100.0 * _pagano_fields(0.5, 0.5)["w"][0] / S_THIN ** 4)


def _pagano_shear(x: float, y: float, comp: int) -> Callable[[], float]:
    def run() -> float:
        e = 1e-4 * S_THIN
        names = ("Mx", "My", "Mxy")

        def grad(dx, dy):
            hi, lo = _pagano_fields(x, y, dx, dy), _pagano_fields(x, y, -dx, -dy)
            return np.array([(hi[k][0] - lo[k][0]) / (2 * e) for k in names])

        tau = equilibrium_shear(_pagano_section().props, grad(e, 0.0), grad(0.0, e))
        return float(abs(tau[1, 2, comp]) / S_THIN)             # mid-plane = top of ply 2
    return run


def _shear_factor(angles, axis: int) -> Callable[[], float]:
    def run() -> float:
        lam = Laminate("x", tuple(Ply(pagano_material(), a, 1.0) for a in angles))
        return shear_correction_factors(section_properties(lam))[axis]
    return run


def _parabola_peak() -> float:
    """τmax·h/Q of a homogeneous ply of thickness h = 2 (mid-plane of the one ply)."""
    sp = section_properties(Laminate("one", (Ply(pagano_material(), 0.0, 2.0),)))
    return float(shear_distribution(sp, np.array([0.5]))[0, 0, 0, 0] * 2.0)


_QI = (0, 45, -45, 90, 90, -45, 45, 0)
_KAW_Q = "Example 2.6"
_KAW_QBAR = "Example 2.7, Q-bar of the 60° lamina"

PUBLISHED: tuple[Published, ...] = (
    Published("kaw-Q11", f"{KAW_BOOK}, {_KAW_Q}", "Q11 (GPa)", 181.8, 2e-3, _q(0, 0)),
    Published("kaw-Q12", f"{KAW_BOOK}, {_KAW_Q}", "Q12 (GPa)", 2.897, 2e-3, _q(0, 1)),
    Published("kaw-Q22", f"{KAW_BOOK}, {_KAW_Q}", "Q22 (GPa)", 10.35, 2e-3, _q(1, 1)),
    Published("kaw-Q66", f"{KAW_BOOK}, {_KAW_Q}", "Q66 (GPa)", 7.17, 2e-3, _q(2, 2)),
    Published("kaw-Qbar60-11", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄11 (GPa)", 23.65, 2e-3, _qbar60(0, 0)),
    Published("kaw-Qbar60-12", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄12 (GPa)", 32.46, 2e-3, _qbar60(0, 1)),
    Published("kaw-Qbar60-16", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄16 (GPa)", 20.05, 2e-3, _qbar60(0, 2)),
    Published("kaw-Qbar60-22", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄22 (GPa)", 109.4, 2e-3, _qbar60(1, 1)),
    Published("kaw-Qbar60-26", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄26 (GPa)", 54.19, 2e-3, _qbar60(1, 2)),
    Published("kaw-Qbar60-66", f"{KAW_BOOK}, {_KAW_QBAR}", "Q̄66 (GPa)", 36.74, 2e-3, _qbar60(2, 2)),
    Published("kaw-60-Ex", f"{KAW_BOOK}, Example 2.8 (from memory, re-derived)", "Ex (GPa)", 12.42, 2e-3,
              _constant((60.0,), "Ex", 1e3)),
    Published("kaw-60-Ey", f"{KAW_BOOK}, Example 2.8 (from memory, re-derived)", "Ey (GPa)", 28.78, 2e-3,
              _constant((60.0,), "Ey", 1e3)),
    Published("kaw-60-Gxy", f"{KAW_BOOK}, Example 2.8 (from memory, re-derived)", "Gxy (GPa)", 8.761, 2e-3,
              _constant((60.0,), "Gxy", 1e3)),
    Published("kaw-60-nuxy", f"{KAW_BOOK}, Example 2.8 (from memory, re-derived)", "nuxy", 0.09783, 2e-3,
              _constant((60.0,), "nuxy", 1.0)),
    Published("kaw-max-stress", f"{KAW_BOOK}, ch. 2 strength ratio example (from memory, re-derived)",
              "strength ratio, max stress, (2, -3, 4) MPa at 60°", 16.33, 2e-3, _ratio(MaxStress)),
    Published("kaw-max-strain", f"{KAW_BOOK}, ch. 2 strength ratio example (from memory, re-derived)",
              "strength ratio, max strain", 16.33, 2e-3, _ratio(MaxStrain)),
    Published("kaw-tsai-hill", f"{KAW_BOOK}, ch. 2 strength ratio example (from memory, re-derived)",
              "strength ratio, Tsai-Hill", 16.06, 2e-3, _ratio(TsaiHill)),
    Published("kaw-tsai-wu", f"{KAW_BOOK}, ch. 2 strength ratio example (from memory, re-derived)",
              "strength ratio, Tsai-Wu (F12* = -1/2)", 22.39, 2e-3, _ratio(TsaiWu)),
    Published("qi-E", TSAI_HAHN, "[0/±45/90]s membrane E (GPa)", 69.68, 2e-3, _constant(_QI, "Ex", 1e3)),
    Published("qi-nu", TSAI_HAHN, "[0/±45/90]s membrane nu", 0.296, 2e-3, _constant(_QI, "nuxy", 1.0)),
    Published("qi-G", TSAI_HAHN, "[0/±45/90]s membrane G (GPa)", 26.88, 2e-3, _constant(_QI, "Gxy", 1e3)),
    Published("pagano-w", PAGANO, "w̄ at the centre", 0.4312, 1e-3, _pagano_deflection),
    Published("pagano-sx", PAGANO, "|σ̄x| at (a/2, a/2, h/2)", 0.539, 2e-3, _pagano_stress(0.5, 0.5, 3, 2, 0)),
    Published("pagano-sy", PAGANO, "|σ̄y| at (a/2, a/2, h/4)", 0.269, 2e-3, _pagano_stress(0.5, 0.5, 2, 2, 0)),
    Published("pagano-txy", PAGANO, "|τ̄xy| at (0, 0, h/2)", 0.0213, 5e-3, _pagano_stress(0.0, 0.0, 3, 2, 2)),
    Published("pagano-txz", f"{PAGANO}; equilibrium integration ({ROLFES})", "|τ̄xz| at (0, a/2, 0)", 0.339, 2e-3,
              _pagano_shear(0.0, 0.5, 0)),
    Published("pagano-tyz", f"{PAGANO}; equilibrium integration ({ROLFES})", "|τ̄yz| at (a/2, 0, 0)", 0.138, 3e-3,
              _pagano_shear(0.5, 0.0, 1)),
    Published("single-ply-k", f"{ROLFES}: homogeneous ply, closed form", "shear factor kx", 5.0 / 6.0, 1e-12,
              _shear_factor((0.0,), 0)),
    Published("single-ply-peak", f"{ROLFES}: homogeneous ply, closed form", "τmax·h/Q (parabola peak)", 1.5, 1e-12,
              _parabola_peak),
    Published("cross-ply-090-kx", f"{ROLFES}, Pagano material [0/90/0] (from memory, re-derived)", "kx", 0.583, 3e-3,
              _shear_factor((0, 90, 0), 0)),
    Published("cross-ply-090-ky", f"{ROLFES}, Pagano material [0/90/0] (from memory, re-derived)", "ky", 0.802, 3e-3,
              _shear_factor((0, 90, 0), 1)),
    Published("cross-ply-090s-kx", f"{ROLFES}, Pagano material [0/90]s (from memory, re-derived)", "kx", 0.595, 3e-3,
              _shear_factor((0, 90, 90, 0), 0)),
    Published("cross-ply-090s-ky", f"{ROLFES}, Pagano material [0/90]s (from memory, re-derived)", "ky", 0.720, 3e-3,
              _shear_factor((0, 90, 90, 0), 1)),
)


def check(case: Published) -> dict:
    """Run one case: ``case``, ``source``, ``quantity``, ``expected``, ``computed``, ``relative_error``, ``pass``."""
    got = float(case.compute())
    err = abs(got - case.expected) / abs(case.expected) if math.isfinite(got) else math.inf
    return {"case": case.case, "source": case.source, "quantity": case.quantity, "expected": case.expected,
            "computed": got, "relative_error": err, "tolerance": case.tolerance, "pass": bool(err <= case.tolerance)}
