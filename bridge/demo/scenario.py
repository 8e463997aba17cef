"""The demo scenario: a battery bay of a small electric aircraft, and its definition file.

Every number here is invented for the demo (the carbon/epoxy ply takes the
published graphite/epoxy data set of Kaw, *Mechanics of Composite Materials*,
2nd ed. 2006, Table 2.1; the honeycomb, knockdowns, masses and load factors
are our own). ``docs/demo.md`` lists them all and what the demo neglects.

Geometry (global axes, mm): X forward, Y to port, Z up. The bay is a closed box
0 ≤ X ≤ L, 0 ≤ Y ≤ W, 0 ≤ Z ≤ H (``Scenario.size``): a sandwich floor at Z = 0, a
sandwich lid at Z = H and four monolithic walls (two side walls in X–Z
planes, two bulkheads in Y–Z planes). Every shell normal points out of the box.
"""

from __future__ import annotations

import textwrap
from dataclasses import dataclass

from shells.defaults import CAUTION

#: Standard gravity in the N-mm system (mm/s²); masses are in tonnes.
G_MM = 9806.65


@dataclass(frozen=True)
class Scenario:
    """Invented dimensions, masses and load factors of the demo bay (N-mm-tonne units).

    Attributes
    ----------
    size : (float, float, float)
        Bay length along X (fore-aft), width along Y (span) and height along Z (mm).
    cells : (int, int, int)
        Quadrilaterals along X, Y and Z edges (odd, so one cell sits on each panel centre).
    battery_mass : float
        Battery on the floor, spread uniformly over it (tonne).
    lid_mass : float
        Equipment (management unit, harness, cooling plate) spread over the lid (tonne).
    vent_pressure : float
        Limit internal overpressure of battery venting (MPa), on every panel.
    crash_g : (float, float)
        Ultimate inertia factors (forward, down) of the emergency-landing (crash) case.
    landing_g : float
        Limit vertical inertia factor of the landing case.
    hot_delta_T : float
        Hot-day temperature rise of the bay over the stress-free state (°C).
    """

    size: tuple[float, float, float] = (1200.0, 800.0, 300.0)
    cells: tuple[int, int, int] = (41, 27, 11)
    battery_mass: float = 0.180
    lid_mass: float = 0.015
    vent_pressure: float = 0.003
    crash_g: tuple[float, float] = (16.0, 6.0)
    landing_g: float = 3.0
    hot_delta_T: float = 45.0

    @property
    def centre(self) -> tuple[float, float, float]:
        """Centre of the box (mm): the axis of the walls' hoop orientation passes through it."""
        return tuple(v / 2 for v in self.size)


#: The scenario the demo runs.
DEMO = Scenario()

#: Zone names and their laminates (the zones select panel tags 1, 2-5 and 6 of bridge.demo.geometry).
ZONE_LAMINATES = {"floor": "floor-sandwich", "walls": "wall-monolithic", "lid": "lid-sandwich"}
#: Name of the mesh cell array holding each cell's element-frame reference vector.
FRAME_ARRAY = "frame_ref"
#: Name of the integer panel-tag cell array.
TAG_ARRAY = "panel"

_MATERIALS = '''
# ---------------------------------------------------------------- materials
[materials.cf-ud]            # graphite/epoxy of Kaw, Mechanics of Composite Materials (2006), Table 2.1
kind = "ply"
fibre = "carbon"
E1 = "181 GPa"
E2 = "10.3 GPa"
G12 = "7.17 GPa"
nu12 = 0.28
G23 = "3.5 GPa"              # invented for the demo (Kaw gives no G23); G13 defaults to G12
alpha1 = "0.02e-6 /degC"
alpha2 = "22.5e-6 /degC"
density = "1.6 g/cm^3"          # from memory (rounded); areal mass only
Xt = "1500 MPa"
Xc = "1500 MPa"
Yt = "40 MPa"
Yc = "246 MPa"
S12 = "68 MPa"
thickness = "0.125 mm"       # cured ply thickness (invented for the demo)
knockdown = { environment = 0.85, damage = 0.80 }   # invented for the demo: 0.68 of strength retained

[materials.aramid-honeycomb] # aramid-paper honeycomb, 64 kg/m^3 class: all values invented for the demo
kind = "core"
G13 = "60 MPa"               # ribbon (L) direction, along the core's 1 axis
G23 = "32 MPa"               # transverse (W) direction
Ez = "190 MPa"               # flatwise compressive modulus (face wrinkling)
S13 = "2.0 MPa"
S23 = "1.1 MPa"
Zc = "4.0 MPa"               # flatwise compressive (crushing) strength
density = "64 kg/m^3"
cell_size = "3.2 mm"
'''

_LAMINATES = '''
# ---------------------------------------------------------------- laminates (ply 1 at the bottom, the inner face)
[laminates.floor-sandwich]   # 0.5 mm faces on 15 mm core; core ribbon (L) across the short span (laminate y)
layup = "[0/90/45/-45/90:aramid-honeycomb@15*]s"
material = "cf-ud"

[laminates.wall-monolithic]  # +-45-rich shear web: 16 of 24 plies at +-45, 3.0 mm
layup = "[45/-45/0/45/-45/90/45/-45/0/45/-45/90]s"
material = "cf-ud"

[laminates.lid-sandwich]     # 0.5 mm faces on 12.7 mm core; core ribbon (L) across the short span
layup = "[0/90/45/-45/90:aramid-honeycomb@12.7*]s"
material = "cf-ud"
'''

_ANALYSIS = '''
# ---------------------------------------------------------------- analysis
[analysis]
criteria = ["max-stress", "tsai-wu", "hashin", "core-shear", "core-crushing", "wrinkling", "dimpling"]
factor_of_safety = {{ limit = 1.5, ultimate = 1.0 }}   # 14 CFR 25.303 on limit loads
transverse_shear = "equilibrium"
hot_spots = 20

# ---------------------------------------------------------------- element frames
# Each cell's x axis is the projection of its own reference vector (mesh cell array "{frame}"):
# global X on the floor and the lid, global Z (up) on the four walls. No cell relies on the fall-back.
[frames]
vectors = "{frame}"

# ---------------------------------------------------------------- zones (panel tags: 1 floor, 2-5 walls, 6 lid)
[[zones]]
name = "floor"
laminate = "floor-sandwich"
select = {{ tag = "{tag}", values = [1] }}
orientation = {{ vector = [1, 0, 0] }}      # 0 deg fore-aft

[[zones]]
name = "walls"
laminate = "wall-monolithic"
select = {{ tag = "{tag}", values = [2, 3, 4, 5] }}
orientation = {{ axis = [0, 0, 1], origin = [{cx:g}, {cy:g}, 0], mode = "hoop" }}   # 0 deg horizontal, round the bay

[[zones]]
name = "lid"
laminate = "lid-sandwich"
select = {{ tag = "{tag}", values = [6] }}
orientation = {{ vector = [1, 0, 0] }}      # 0 deg fore-aft
'''


def definition_text(cases_toml: str, s: Scenario = DEMO) -> str:
    """The demo definition file (TOML), with the ``[cases]`` tables given.

    Parameters
    ----------
    cases_toml : str
        The ``[cases.NAME]`` tables (see :func:`bridge.demo.loads.cases_toml`).
    s : Scenario
        Geometry used for the walls' orientation axis.

    Returns
    -------
    str
        A complete definition in the N-mm system (docs/definition.md).
    """
    cx, cy, _ = s.centre
    caution = textwrap.wrap(CAUTION, 100, initial_indent="# ", subsequent_indent="# ")
    head = ('# plybridge demo: battery bay of a small electric aircraft (written by `plybridge demo`).\n'
            '# Invented data for the demo only; see docs/demo.md.\n' + "\n".join(caution) + "\n\n"
            'units = "N-mm"\ntitle = "Demo: battery bay (floor, walls, lid)"\n')
    return (head + _MATERIALS + _LAMINATES + _ANALYSIS.format(frame=FRAME_ARRAY, tag=TAG_ARRAY, cx=cx, cy=cy)
            + "\n# ---------------------------------------------------------------- load cases\n" + cases_toml)
