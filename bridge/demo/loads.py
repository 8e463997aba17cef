"""Load cases of the demo bay and their shell resultants from the closed-form plate solution.

Each panel is taken as simply supported on its four edges and solved on its
own: the bending part is the Navier series of a first-order shear deformation
plate (:func:`shells.navier.plate_fields`, with the panel's D and H from
:func:`bridge.model.sections.section_of`) under a uniform lateral load, evaluated at
the cell centroids in the panel's plate coordinates; the membrane part is a
uniform in-plane flow from an equilibrium estimate (below). Resultants come out
in the panel axes (u, v) and are rotated into each cell's element frame as
:mod:`bridge.model` builds it (N, M as stresses, Q as a vector).

Membrane estimates (documented in docs/demo.md):

- internal pressure p on the closed box: a cut across X carries p·W·H over the
  perimeter 2(W + H) of the section, so N_X = pWH / (2(W + H)); likewise
  N_Y = pLH / (2(L + H)) and, in the walls, N_Z = pLW / (2(L + W));
- the bay hangs from fittings along the top of its walls: a downward floor load
  F goes up the four walls as a uniform vertical tension F / (2(L + W));
- the battery's forward inertia F_x enters the floor and the two side walls
  carry it to the top as shear webs, F_x / (2L) each.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bridge.definition.loader import Definition
from bridge.mesh.shell import ShellMesh
from bridge.model.build import build_model
from bridge.recover.resultants import to_element_frame
from bridge.model.sections import section_of, zone_offset
from shells.navier import plate_fields, resultants

from bridge.demo.geometry import Panel, panel_of_cells, panels
from bridge.demo.scenario import DEMO, G_MM, Scenario


@dataclass(frozen=True)
class LoadCase:
    """One demo load case.

    Attributes
    ----------
    name, kind, description : str
        ``kind`` is ``limit`` or ``ultimate``.
    lateral : tuple of float
        Uniform lateral load of each panel (MPa), positive along its outward normal, in :func:`panels` order.
    membrane : tuple of (float, float, float)
        Uniform in-plane flows (N_uu, N_vv, N_uv) of each panel in its plate axes (N/mm).
    delta_T : float
        Uniform temperature rise from the stress-free state (°C).
    pressure : float
        Through-thickness pressure for core crushing (MPa): σ3 = −pressure.
    """

    name: str
    kind: str
    description: str
    lateral: tuple[float, ...]
    membrane: tuple[tuple[float, float, float], ...]
    delta_T: float = 0.0
    pressure: float = 0.0


def _pressure_membrane(s: Scenario, p: float) -> list[tuple[float, float, float]]:
    L, W, H = s.size
    nx, ny, nz = p * W * H / (2 * (W + H)), p * L * H / (2 * (L + H)), p * L * W / (2 * (L + W))
    along = {"floor": (nx, ny), "lid": (nx, ny), "port-wall": (nx, nz), "starboard-wall": (nx, nz),
             "front-bulkhead": (ny, nz), "rear-bulkhead": (ny, nz)}
    return [(*along[pn.name], 0.0) for pn in panels(s)]


def _inertia(s: Scenario, down_g: float, forward_g: float = 0.0) -> tuple[list[float], list[tuple]]:
    """Lateral loads and wall flows of battery and lid inertia (factors in g, downward and forward)."""
    L, W, _ = s.size
    area = L * W
    f_down = s.battery_mass * G_MM * down_g
    f_fwd = s.battery_mass * G_MM * forward_g
    lateral, membrane = [], []
    for pn in panels(s):
        if pn.zone == "floor":          # outward normal −Z: a downward load is along +n
            lateral.append(f_down / area)
            membrane.append((0.0, 0.0, 0.0))
        elif pn.zone == "lid":          # outward normal +Z: downward is along −n
            lateral.append(-s.lid_mass * G_MM * down_g / area)
            membrane.append((0.0, 0.0, 0.0))
        else:
            shear = 0.0 - float(np.dot((1.0, 0.0, 0.0), pn.u)) * f_fwd / (2 * L)   # side walls only (u = ±X)
            lateral.append(0.0)
            membrane.append((0.0, f_down / (2 * (L + W)), shear))
    return lateral, membrane


def load_cases(s: Scenario = DEMO) -> tuple[LoadCase, ...]:
    """The four demo cases: bay pressure, forward crash, landing, hot day."""
    p = s.vent_pressure
    forward_g, down_g = s.crash_g
    crash = _inertia(s, down_g, forward_g)
    landing = _inertia(s, s.landing_g)
    ground = _inertia(s, 1.0)
    return (
        LoadCase("bay-pressure", "limit", f"battery venting: {p:g} MPa internal overpressure on every panel",
                 tuple(p for _ in panels(s)), tuple(_pressure_membrane(s, p)), pressure=p),
        LoadCase("crash-forward", "ultimate", f"emergency landing: battery {forward_g:g} g forward, "
                 f"{down_g:g} g down", tuple(crash[0]), tuple(crash[1])),
        LoadCase("landing", "limit", f"hard landing: {s.landing_g:g} g down on battery and lid equipment",
                 tuple(landing[0]), tuple(landing[1])),
        LoadCase("hot-day", "limit", f"parked in the sun: {s.hot_delta_T:g} °C rise, 1 g ground loads",
                 tuple(ground[0]), tuple(ground[1]), delta_T=s.hot_delta_T),
    )


def cases_toml(cases: tuple[LoadCase, ...]) -> str:
    """The ``[cases.NAME]`` tables of the definition, one step of the resultants file each (in order)."""
    out = []
    for k, c in enumerate(cases, start=1):
        out.append(f'[cases.{c.name}]\nstep = {k}\nkind = "{c.kind}"\ndescription = "{c.description}"\n'
                   f'delta_T = "{c.delta_T:g} degC"\n' + (f'pressure = "{c.pressure:g} MPa"\n' if c.pressure else "")
                   + "\n")
    return "".join(out)


def panel_resultants(defn: Definition, panel: Panel, x: np.ndarray, y: np.ndarray,
                     loads: tuple[tuple[float, tuple[float, float, float]], ...]) -> np.ndarray:
    """Resultants of one panel at plate points (x, y) under several loads, in its plate axes (u, v).

    Parameters
    ----------
    defn : Definition
        The demo definition (its zone ``panel.zone`` names the laminate and offset).
    panel : Panel
    x, y : ndarray, shape (k,)
        Plate coordinates (mm), 0 ≤ x ≤ a, 0 ≤ y ≤ b.
    loads : sequence of (q, (N_uu, N_vv, N_uv))
        Per load: uniform lateral load q (MPa) along the outward normal and uniform in-plane flows (N/mm).

    Returns
    -------
    ndarray, shape (n_loads, k, 8)
        Nx, Ny, Nxy, Mx, My, Mxy, Qx, Qy with x = u, y = v (docs/conventions.md signs). The Navier series is
        summed once for q = 1 and scaled (the plate is linear).
    """
    zone = next(z for z in defn.zones if z.name == panel.zone)
    sec = section_of(defn, zone.laminate, zone_offset(defn, zone))
    unit = plate_fields(sec.props.D, sec.H, panel.a, panel.b, x, y, q0=1.0)
    return np.stack([resultants({k: q * v for k, v in unit.items()}, membrane) for q, membrane in loads])


def demo_resultants(defn: Definition, mesh: ShellMesh, cases: tuple[LoadCase, ...],
                    s: Scenario = DEMO) -> np.ndarray:
    """Resultants (n_cases, n_cells, 8) of every case in each cell's element frame.

    The element frames and material angles are those :func:`bridge.model.build_model` gives the mesh under
    ``defn``; the panel-axis resultants are rotated with :func:`bridge.recover.resultants.to_element_frame`
    (``frame="vectors"``, the vectors being each cell's panel u axis).

    Raises
    ------
    ValueError
        If a zone's laminate 0° direction is not along its panels' u axis (the plate solution uses the
        laminate's D and H in the panel axes).
    """
    model = build_model(defn, mesh)
    owner = panel_of_cells(mesh, s)
    cent = mesh.centroids()
    u = np.array([p.u for p in panels(s)])[owner]
    phi = np.radians(model.phi)[:, None]
    lam_x = np.cos(phi) * model.frame_x + np.sin(phi) * model.frame_y
    if not np.allclose(np.einsum("ij,ij->i", lam_x, u), 1.0, atol=1e-9):
        raise ValueError("demo: a zone's laminate 0° direction is not along its panel's u axis")
    R = np.zeros((len(cases), mesh.n_cells, 8))
    for k, pn in enumerate(panels(s)):
        cells = np.flatnonzero(owner == k)
        x, y = pn.local(cent[cells])
        R[:, cells] = panel_resultants(defn, pn, x, y, tuple((c.lateral[k], c.membrane[k]) for c in cases))
    return to_element_frame(R, "vectors", frames=(model.frame_x, model.frame_y, model.normal), vectors=u)
