"""A spar-box-like scenario for the picture and report tests (invented data, our own scenario).

A closed rectangular box 12 m long, 1 m wide and 0.5 m deep (slenderness 12:1), about 30,000 quadrilaterals
generated here: carbon caps on top and bottom whose ply count drops from 34 at the root to 28 and 24 along the
span (three zones), glass-faced foam sandwich webs on the sides. Loads are those of a cantilever with its root
at x = 0: a flapwise tip load in both directions (caps carry the bending moment as N_x, webs the shear force as
N_xy), a torque (a closed-section shear flow in every wall), a cold soak and one combination. Every value is
invented for the tests; nothing here is data of a real structure.

Global axes (mm): x along the span, y across (chord), z up; every shell normal points out of the box.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

LENGTH, WIDTH, DEPTH = 12000.0, 1000.0, 500.0
#: Quadrilaterals along the span, across a cap and down a web (30,400 cells).
N_SPAN, N_CAP, N_WEB = 400, 25, 13
#: Zone tags (cell array "part"): caps by station, then the webs.
PARTS = {"cap-root": 1, "cap-mid": 2, "cap-tip": 3, "webs": 4}
STATIONS = (4000.0, 8000.0)
#: Tip load (N), torque (N·mm) and cold soak (°C) of the cases.
TIP_LOAD, TORQUE, COLD = 100e3, 1.5e8, -60.0

DEFINITION = """# Spar-box test scenario of plybridge (invented data; tests/sparbox.py).
units = "N-mm"
title = "Spar box (test scenario)"

[materials.carbon-ud]
source = "invented for the plybridge tests"
E1 = "135 GPa"
E2 = "8.5 GPa"
G12 = "4.8 GPa"
nu12 = 0.3
alpha1 = "-0.3e-6 /degC"
alpha2 = "28e-6 /degC"
density = "1.58 g/cm^3"
Xt = "1800 MPa"
Xc = "1100 MPa"
Yt = "50 MPa"
Yc = "190 MPa"
S12 = "80 MPa"
thickness = "0.25 mm"
knockdown = { environment = 0.8, damage = 0.85 }

[materials.glass-ud]
source = "invented for the plybridge tests"
E1 = "40 GPa"
E2 = "9 GPa"
G12 = "3.5 GPa"
nu12 = 0.28
alpha1 = "7e-6 /degC"
alpha2 = "30e-6 /degC"
density = "1.9 g/cm^3"
Xt = "900 MPa"
Xc = "600 MPa"
Yt = "40 MPa"
Yc = "130 MPa"
S12 = "60 MPa"
thickness = "0.5 mm"
knockdown = 0.8

[materials.pvc-foam]
kind = "core"
source = "invented for the plybridge tests"
G13 = "35 MPa"
G23 = "35 MPa"
Ez = "100 MPa"
S13 = "0.9 MPa"
S23 = "0.9 MPa"
Zc = "1.2 MPa"
density = "100 kg/m^3"

[laminates.cap-34]
layup = "[0/0/45/0/0/-45/0/0/90/0/0/45/0/0/-45/0/0]s"
material = "carbon-ud"

[laminates.cap-28]
layup = "[0/0/45/0/0/-45/0/90/0/0/45/0/-45/0]s"
material = "carbon-ud"

[laminates.cap-24]
layup = "[0/0/45/0/-45/0/90/0/45/0/-45/0]s"
material = "carbon-ud"

[laminates.web-sandwich]
layup = "[45/-45/45/-45/0:pvc-foam@20*]s"
material = "glass-ud"

[analysis]
criteria = ["max-stress", "tsai-wu", "hashin", "core-shear", "wrinkling"]
hot_spots = 20

{zones}
[cases.flap-up]
step = 1
[cases.flap-down]
step = 2
[cases.torsion]
step = 3
[cases.cold]
step = 4
delta_T = -60

[combinations.flap-up-twisted]
factors = { flap-up = 1.0, torsion = 0.8 }
kind = "ultimate"
"""

STEPS = ("flap-up", "flap-down", "torsion", "cold")
#: Zone → laminate; every zone lays its 0° along the span (global x).
ZONE_LAMINATES = {"cap-root": "cap-34", "cap-mid": "cap-28", "cap-tip": "cap-24", "webs": "web-sandwich"}


def definition_text() -> str:
    """The scenario's definition file (zones written from :data:`ZONE_LAMINATES` and :data:`PARTS`)."""
    zones = "".join(f'[[zones]]\nname = "{z}"\nlaminate = "{lam}"\nselect = {{ tag = "part", values = [{PARTS[z]}] }}\n'
                    f'orientation = {{ vector = [1, 0, 0] }}\n\n' for z, lam in ZONE_LAMINATES.items())
    return DEFINITION.replace("{zones}", zones)


def ring() -> tuple[np.ndarray, np.ndarray]:
    """(y, z) of the nodes round the section, anticlockwise seen from +x, and the part of each segment (cap 0, web 1)."""
    w, d = WIDTH / 2, DEPTH / 2
    front = np.column_stack([np.full(N_WEB, w), np.linspace(-d, d, N_WEB + 1)[:-1]])
    top = np.column_stack([np.linspace(w, -w, N_CAP + 1)[:-1], np.full(N_CAP, d)])
    rear = np.column_stack([np.full(N_WEB, -w), np.linspace(d, -d, N_WEB + 1)[:-1]])
    bottom = np.column_stack([np.linspace(-w, w, N_CAP + 1)[:-1], np.full(N_CAP, -d)])
    web = np.concatenate([np.ones(N_WEB), np.zeros(N_CAP), np.ones(N_WEB), np.zeros(N_CAP)]).astype(int)
    return np.vstack([front, top, rear, bottom]), web


def mesh_arrays():
    """(points, quads, part, normal, frame_x): the box's nodes and cells, outward normals."""
    yz, web = ring()
    m = len(yz)
    x = np.linspace(0.0, LENGTH, N_SPAN + 1)
    points = np.column_stack([np.repeat(x, m), np.tile(yz[:, 0], N_SPAN + 1), np.tile(yz[:, 1], N_SPAN + 1)])
    i, j = np.meshgrid(np.arange(N_SPAN), np.arange(m), indexing="ij")
    i, j = i.ravel(), j.ravel()
    jn = (j + 1) % m
    quads = np.column_stack([i * m + j, i * m + jn, (i + 1) * m + jn, (i + 1) * m + j])
    xc = (x[i] + x[i + 1]) / 2
    station = np.searchsorted(np.array(STATIONS), xc)
    part = np.where(web[j] == 1, PARTS["webs"], station + 1).astype(np.int32)
    tangent = np.zeros((len(j), 3))
    tangent[:, 1:] = yz[jn] - yz[j]
    tangent /= np.linalg.norm(tangent, axis=1, keepdims=True)
    normal = np.cross(tangent, [1.0, 0.0, 0.0])
    return points, quads, part, normal, xc, tangent


def resultants() -> np.ndarray:
    """(4 steps, ncell, 8) resultants in each cell's element frame (x along the span, y = normal × x)."""
    points, quads, part, normal, xc, tangent = mesh_arrays()
    n = len(quads)
    centre_z = points[quads][:, :, 2].mean(axis=1)
    y_elem = np.cross(normal, [1.0, 0.0, 0.0])
    cap = part != PARTS["webs"]
    moment = TIP_LOAD * (LENGTH - xc)                 # flapwise bending moment, tip load up (+z)
    out = np.zeros((len(STEPS), n, 8))
    # Caps carry the moment as N_x (top in compression for a tip load up); webs carry the shear force as N_xz.
    nx = -np.sign(centre_z) * moment / (DEPTH * WIDTH)
    vertical_shear = TIP_LOAD / (2 * DEPTH)
    q_xz = np.where(cap, 0.0, vertical_shear)
    # In-plane shear in the element frame: N_xy = x_e · N · y_e with N = q (e_x ⊗ e_z + e_z ⊗ e_x).
    flap = np.zeros((n, 8))
    flap[:, 0] = np.where(cap, nx, 0.0)
    flap[:, 2] = q_xz * y_elem[:, 2]
    flap[:, 6] = np.where(cap, 0.0, 0.02 * vertical_shear)   # a little transverse shear in the sandwich webs
    out[0] = flap
    out[1] = -0.6 * flap
    # Torsion: closed-section shear flow q = T / (2 A) along the anticlockwise tangent of every wall.
    q = TORQUE / (2 * WIDTH * DEPTH)
    out[2, :, 2] = q * np.einsum("ij,ij->i", tangent, y_elem)
    return out


def write_scenario(folder: Path) -> dict[str, Path]:
    """Write the definition, the mesh (VTU, with the 'part' tags) and the resultants (HDF5) into ``folder``."""
    import meshio

    from bridge.recover.resultants import write_resultants_h5

    folder.mkdir(parents=True, exist_ok=True)
    points, quads, part, *_ = mesh_arrays()
    paths = {"definition": folder / "spar.toml", "mesh": folder / "spar.vtu", "resultants": folder / "spar-loads.h5"}
    paths["definition"].write_text(definition_text(), encoding="utf-8")
    meshio.Mesh(points, [("quad", quads)], cell_data={"part": [part]}).write(paths["mesh"])
    write_resultants_h5(paths["resultants"], list(STEPS), resultants())
    return paths


def spar_store(base: Path, store_plies: bool = False) -> Path:
    """The results store of the scenario (built once per test session under ``base``)."""
    from tests.common import run_cli

    name = "spar-plies.h5" if store_plies else "spar.h5"
    folder = base / "sparbox"
    store = folder / name
    if store.exists():
        return store
    paths = write_scenario(folder) if not (folder / "spar.toml").exists() else {
        "definition": folder / "spar.toml", "mesh": folder / "spar.vtu", "resultants": folder / "spar-loads.h5"}
    tmp = folder / f"building-{name}"
    args = ["--store", "plies"] if store_plies else []
    proc = run_cli("recover", paths["definition"], paths["mesh"], paths["resultants"], "-o", tmp, "--quiet", *args)
    assert proc.returncode == 0, proc.stderr
    tmp.replace(store)
    return store
