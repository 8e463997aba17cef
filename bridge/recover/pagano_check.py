"""Pagano's [0/90/90/0] plate through the whole recover path: the check ``plybridge verify`` and the tests run.

Pagano, J. Composite Materials 4 (1970) 20–34: simply supported square plate, E_L/E_T 25, G_LT/E_T 0.5,
G_TT/E_T 0.2, ν 0.25, equal plies, S = a/h = 100, load q0 sin(πx/a) sin(πy/a). The resultants are the classical
Navier solution (:mod:`shells.navier`) at the centroids of a 40 × 40 quad mesh of a = 100 mm, h = 1 mm
(E_T = 1 GPa, q0 = 0.01 MPa, so τ̄ = τ/(q0·S) = τ in MPa). The mid-plane transverse shear is read back from
``/plies/transverse_shear`` of the store (top of ply 2, a 90° ply: τ13 = τyz, τ23 = −τxz).
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np

A_MM, H_MM, Q0, CELLS = 100.0, 1.0, 0.01, 40

PAGANO_DEFINITION = """
units = "N-mm"
[materials.pagano]
E1 = "25 GPa"
E2 = "1 GPa"
G12 = "0.5 GPa"
G13 = "0.5 GPa"
G23 = "0.2 GPa"
nu12 = 0.25
Xt = 1000
Xc = 1000
Yt = 50
Yc = 150
S12 = 60
thickness = 0.25
[laminates.cross-ply]
layup = "[0/90]s"
material = "pagano"
[analysis]
criteria = ["max-stress"]
transverse_shear = "{method}"
[[zones]]
name = "plate"
laminate = "cross-ply"
"""


def plate_mesh():
    """The 40 × 40 quad mesh of the a × a plate in z = 0 (normal +z)."""
    from bridge.mesh.shell import ShellMesh

    n = CELLS
    x, y = np.meshgrid(np.linspace(0, A_MM, n + 1), np.linspace(0, A_MM, n + 1))
    pts = np.column_stack([x.ravel(), y.ravel(), np.zeros(x.size)])
    i, j = np.meshgrid(np.arange(n), np.arange(n))
    n0 = (j * (n + 1) + i).ravel()
    return ShellMesh(pts, (("quad", np.column_stack([n0, n0 + 1, n0 + n + 2, n0 + n + 1])),))


def pagano_inputs(folder: str | Path, method: str = "field") -> tuple[Path, Path, Path]:
    """Write the mesh (VTU), the definition and the resultants (HDF5) into ``folder``; return their paths."""
    import tomllib

    from bridge.definition.loader import parse_definition
    from bridge.mesh.formats import write_mesh
    from bridge.model.sections import section_of
    from bridge.recover.resultants import write_resultants_h5
    from shells.navier import plate_fields, resultants

    folder = Path(folder)
    text = PAGANO_DEFINITION.format(method=method)
    (folder / "pagano.toml").write_text(text, encoding="utf-8")
    mesh = plate_mesh()
    write_mesh(folder / "plate.vtu", mesh)
    D = section_of(parse_definition(tomllib.loads(text), "pagano.toml"), "cross-ply").props.D
    c = mesh.centroids()
    R = resultants(plate_fields(D, None, A_MM, A_MM, c[:, 0], c[:, 1], q0=Q0, load="sine"))
    write_resultants_h5(folder / "navier.h5", ["sine"], R[None])
    return folder / "plate.vtu", folder / "pagano.toml", folder / "navier.h5"


def plate_shear(shear: np.ndarray) -> tuple[float, float]:
    """(τ̄xz at the cell nearest (0, a/2), τ̄yz at the cell nearest (a/2, 0)) from one case of
    ``/plies/transverse_shear`` (ncell, maxply, 3, 2), normalised by q0·S."""
    c = plate_mesh().centroids()
    k1 = int(np.argmin(np.hypot(c[:, 0], c[:, 1] - A_MM / 2)))
    k2 = int(np.argmin(np.hypot(c[:, 0] - A_MM / 2, c[:, 1])))
    scale = Q0 * A_MM / H_MM
    return float(-shear[k1, 1, 2, 1] / scale), float(shear[k2, 1, 2, 0] / scale)


def recovered_plate_shear(method: str = "field") -> tuple[float, float]:
    """Run ``recover --store plies`` on the plate in a temporary folder; (τ̄xz, τ̄yz) as :func:`plate_shear`."""
    import h5py

    from bridge.recover.run import run_recover

    with tempfile.TemporaryDirectory(prefix="plybridge-verify-") as tmp:
        mesh, defn, res = pagano_inputs(tmp, method)
        out = Path(tmp) / "out.h5"
        run_recover(str(defn), str(mesh), [str(res)], str(out), store_plies=True)
        with h5py.File(out, "r") as h5:
            return plate_shear(h5["plies/transverse_shear"][0])
