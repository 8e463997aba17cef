"""Published checks that need the user's side: a definition in lbf-in, and the whole recover path.

:func:`all_cases` is the one list ``plybridge verify`` and the tests run: the mechanics cases of
:mod:`shells.published` and :mod:`shells.published_sections`, then these.
"""

from __future__ import annotations

import functools
import tomllib

import numpy as np

from shells.criteria import MaxStress
from shells.published import KAW_BOOK, PAGANO, PUBLISHED, Published
from shells.published_sections import SECTION_CASES
from shells.recovery_reference import ply_states
from shells.recovery_tables import build_tables

#: 1 psi in MPa (exact: 0.45359237 kg × 9.80665 m/s² per (0.0254 m)², NIST SP 811, 2008).
PSI_MPA = 0.45359237 * 9.80665 / 0.0254 ** 2 / 1e6

_LBF_IN = """
units = "lbf-in"
[materials.kaw]
E1 = "181 GPa"
E2 = "10.3 GPa"
G12 = "7.17 GPa"
nu12 = 0.28
Xt = "1500 MPa"
Xc = "1500 MPa"
Yt = "40 MPa"
Yc = "246 MPa"
S12 = "68 MPa"
thickness = "1 mm"
[laminates.lamina]
layup = "[60]"
material = "kaw"
"""


@functools.lru_cache(maxsize=1)
def _lbf_in_section():
    from bridge.definition.loader import parse_definition
    from bridge.model.sections import section_of

    return section_of(parse_definition(tomllib.loads(_LBF_IN), "kaw-lbf-in.toml"), "lamina")


def _lbf_in_q11() -> float:
    """Q11 of the lamina defined in lbf-in, back in GPa."""
    return float(_lbf_in_section().laminate.plies[0].material.Q()[0, 0] * PSI_MPA / 1e3)


def _lbf_in_ratio() -> float:
    """Kaw's 60° lamina under (σx, σy, τxy) = (2, −3, 4) MPa, resultants in lbf/in: max-stress ratio."""
    sec = _lbf_in_section()
    h = sec.props.thickness                                   # in
    R = np.zeros((1, 1, 8))
    R[0, 0, :3] = np.array([2.0, -3.0, 4.0]) / PSI_MPA * h     # N = σ h, lbf/in
    st = ply_states(build_tables([sec]), np.zeros(1, int), np.zeros(1), R, np.zeros((1, 1)))
    return float(MaxStress.ratio(st["mech"][0, 0, 0, 1], st["fixed"][0, 0, 0, 1], sec.ply_params[0])[0])


@functools.lru_cache(maxsize=1)
def _pagano_field() -> tuple[float, float]:
    from bridge.recover.pagano_check import recovered_plate_shear

    return recovered_plate_shear("field")


_FIELD = f"{PAGANO}; full equilibrium from the fitted moment field, recover --store plies, 40 × 40 mesh"

BRIDGE_CASES: tuple[Published, ...] = (
    Published("kaw-Q11-lbf-in", f"{KAW_BOOK}, Example 2.6, definition in lbf-in", "Q11 (GPa) through psi", 181.8,
              2e-3, _lbf_in_q11),
    Published("kaw-max-stress-lbf-in", f"{KAW_BOOK}, ch. 2 strength ratio example (from memory, re-derived), in "
              "lbf-in", "strength ratio, max stress, (2, -3, 4) MPa at 60°", 16.33, 2e-3, _lbf_in_ratio),
    Published("pagano-field-txz", _FIELD, "|τ̄xz| at (0, a/2, 0), cell nearest", 0.339, 2e-2,
              lambda: abs(_pagano_field()[0])),
    Published("pagano-field-tyz", _FIELD, "|τ̄yz| at (a/2, 0, 0), cell nearest", 0.138, 2e-2,
              lambda: abs(_pagano_field()[1])),
)


def all_cases() -> tuple[Published, ...]:
    """Every built-in published case, in the order ``plybridge verify`` prints them."""
    return PUBLISHED + SECTION_CASES + BRIDGE_CASES
