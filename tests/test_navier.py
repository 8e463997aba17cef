"""Pagano's simply supported [0/90/90/0] plate: classical limit, equilibrium transverse shear, shear deflection.

Source: N. J. Pagano, Exact solutions for rectangular bidirectional composites and sandwich plates,
J. Composite Materials 4 (1970) 20–34. Material E_L/E_T 25, G_LT/E_T 0.5, G_TT/E_T 0.2, nu 0.25, equal plies,
square plate a = b, load q0 sin(πx/a) sin(πy/a), S = a/h. Thin-limit (classical) values from memory,
re-derived by the Navier series; S = 4 exact value as quoted from Pagano's table. Pagano's z points the other way (load on his top face): compare magnitudes.
"""

from __future__ import annotations

import numpy as np
import pytest

from shells.laminate import Laminate, Ply
from shells.materials import Orthotropic
from shells.navier import plate_fields, resultants
from shells.recovery_reference import ply_states
from shells.recovery_tables import build_tables
from shells.section import build_section
from shells.shear import equilibrium_shear

PAGANO = Orthotropic("pagano", E1=25.0, E2=1.0, G12=0.5, nu12=0.25, G13=0.5, G23=0.2).validate()
H = 1.0


@pytest.fixture(scope="module")
def plate():
    lam = Laminate("cp", tuple(Ply(PAGANO, a, H / 4) for a in (0, 90, 90, 0)))
    return build_section(lam)


def _fields(sec, S, x, y, shear=False):
    a = S * H
    return plate_fields(sec.props.D, sec.H if shear else None, a, a, np.asarray(x, float), np.asarray(y, float),
                        load="sine")


def test_classical_limit_deflection_and_stresses(plate):
    S = 100.0
    a = S * H
    pts = np.array([[a / 2, a / 2], [0.0, 0.0]])
    f = _fields(plate, S, pts[:, 0], pts[:, 1])
    assert 100 * f["w"][0] / (H * S ** 4) == pytest.approx(0.4312, rel=1e-3)
    st = ply_states(build_tables([plate]), np.zeros(2, int), np.zeros(2), resultants(f)[None], np.zeros((1, 2)))
    sig = st["stress"][0]
    assert abs(sig[0, 3, 2, 0]) / S ** 2 == pytest.approx(0.539, rel=2e-3)       # σ̄x, 0° ply, z = h/2
    assert abs(sig[0, 2, 2, 0]) / S ** 2 == pytest.approx(0.269, rel=2e-3)       # σ̄y (= σ1 of the 90° ply), z = h/4
    assert abs(sig[1, 3, 2, 2]) / S ** 2 == pytest.approx(0.0213, rel=5e-3)      # τ̄xy at the corner, z = h/2


def _gradients(sec, S, x, y, step=1e-4):
    e = step * S * H
    f = lambda dx, dy: _fields(sec, S, [x + dx], [y + dy])  # noqa: E731
    names = ("Mx", "My", "Mxy")
    gx = np.array([(f(e, 0)[k][0] - f(-e, 0)[k][0]) / (2 * e) for k in names])
    gy = np.array([(f(0, e)[k][0] - f(0, -e)[k][0]) / (2 * e) for k in names])
    return gx, gy


def test_equilibrium_transverse_shear_from_moment_gradients(plate):
    # Integrating equilibrium through the thickness with the full moment gradients of the Navier solution
    # gives Pagano's thin-limit τ̄xz = 0.339 at (0, a/2, 0) and τ̄yz = 0.138 at (a/2, 0, 0).
    S = 100.0
    a = S * H
    txz = equilibrium_shear(plate.props, *_gradients(plate, S, 0.0, a / 2))[1, 2, 0] / S
    tyz = equilibrium_shear(plate.props, *_gradients(plate, S, a / 2, 0.0))[1, 2, 1] / S
    assert abs(txz) == pytest.approx(0.339, rel=2e-3)
    assert abs(tyz) == pytest.approx(0.138, rel=3e-3)


def test_recovery_from_shear_forces_alone(plate):
    # From Qx, Qy alone (Rolfes & Rohwer 1997, derivatives of Mxy neglected) the recovery keeps τ̄xz within
    # 1 % of equilibrium here; τ̄yz is 11 % high because on a square cross-ply plate the twisting-moment
    # gradient carries part of Qy. Recorded as the known accuracy of resultant-based recovery.
    S = 100.0
    a = S * H
    f = _fields(plate, S, [0.0, a / 2], [a / 2, 0.0])
    st = ply_states(build_tables([plate]), np.zeros(2, int), np.zeros(2), resultants(f)[None], np.zeros((1, 2)))
    txz = abs(st["shear"][0, 0, 1, 2, 1]) / S      # 90° ply: τ23 = −τxz
    tyz = abs(st["shear"][0, 1, 1, 2, 0]) / S      # 90° ply: τ13 = τyz
    assert txz == pytest.approx(0.339, rel=0.01)
    assert tyz == pytest.approx(0.138, rel=0.12) and tyz > 0.138


def test_shear_deformation_deflection_of_thick_plate(plate):
    # S = 4: Pagano's exact w̄ = 1.93672. First-order shear deformation with the energy-consistent H is within
    # 10 % of it, where the classical plate (0.4312) misses by a factor 4.5.
    S = 4.0
    a = S * H
    w = 100 * _fields(plate, S, [a / 2], [a / 2], shear=True)["w"][0] / (H * S ** 4)
    assert w == pytest.approx(1.93672, rel=0.10)


def test_uniform_load_series_matches_closed_form_isotropic_plate():
    # Timoshenko & Woinowsky-Krieger, Theory of Plates and Shells (1959), Table 8 (from memory):
    # square simply supported isotropic plate, uniform load: w_max = 0.00406 q a⁴ / D, Mx,max = 0.0479 q a².
    from shells.materials import Isotropic
    iso = build_section(Laminate("iso", (Ply(Isotropic("s", E=1.0, nu=0.3).validate(), 0.0, 1.0),)))
    D = iso.props.D[0, 0]
    f = plate_fields(iso.props.D, None, 1.0, 1.0, np.array([0.5]), np.array([0.5]), q0=1.0, load="uniform")
    assert f["w"][0] * D == pytest.approx(0.00406, rel=2e-3)
    assert f["Mx"][0] == pytest.approx(0.0479, rel=2e-3)
