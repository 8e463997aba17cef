"""Solver ply values at any position through the thickness, in any axes, read onto our ply points.

In-plane ply stresses vary linearly through a ply (ε(z) = ε⁰ + zκ and a constant ply stiffness, classical
lamination theory: Jones, Mechanics of Composite Materials, 2nd ed. 1999, section 4.2), so values written at
two positions inside a ply give our bottom, middle and top values exactly by a straight line.
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.compare.solver_plies import SolverPlySource, ply_angles
from bridge.definition.loader import parse_definition
from bridge.mesh.formats import vtu
from bridge.model.build import build_model
from postproc.compare import material_to_element, reference_values
from tests.meshes import flat_plate

BASE = """
units = "N-mm"
[materials.cf]
E1 = "140 GPa"
nu12 = 0.3
E2 = "9 GPa"
G12 = "4.6 GPa"
[laminates.three]
material = "cf"
plies = [{angle = 20, thickness = 0.2}, {angle = -50, thickness = 0.3}, {angle = 75, thickness = 0.25}]
[[zones]]
laminate = "three"
orientation = { vector = [1, 0.4, 0] }
[solver_plies]
"""


def setup(tmp_path, table: str):
    import tomllib

    defn = parse_definition(tomllib.loads(BASE + table), "def.toml")
    mesh = flat_plate(3, 2)
    model = build_model(defn, mesh)
    R = np.random.default_rng(9).normal(size=(1, mesh.n_cells, 8)) * np.array([50, 40, 20, 9, 8, 5, 0, 0])
    ours = reference_values(model.tables(), model.section, model.phi, R, np.zeros((1, mesh.n_cells)), None, None,
                            "stress")[0]
    return defn, mesh, model, ours


def at(ours, ply, f):
    """Our in-plane values at fraction f through ply (straight line between bottom and top)."""
    return (1 - f) * ours[:, ply, 0, :3] + f * ours[:, ply, 2, :3]


def test_fractions_inside_each_ply_give_every_point(tmp_path):
    table = ('axes = "laminate"\ncomponents = ["sigma_x", "sigma_y", "tau_xy"]\n'
             'locations = [{ array = "lo{ply}", fraction = 0.25 }, { array = "hi{ply}", fraction = 0.75 }]\n')
    defn, mesh, model, ours = setup(tmp_path, table)
    lam = material_to_element(ours[None], (ply_angles(model) - model.phi[:, None])[None, :, :, None], "stress")[0]
    arrays = {}
    for k in range(3):
        for name, f in (("lo", 0.25), ("hi", 0.75)):
            arrays[f"{name}{k + 1}"] = (1 - f) * lam[:, k, 0, :3] + f * lam[:, k, 2, :3]
    vtu.write(tmp_path / "s.vtu", mesh, arrays)
    got = SolverPlySource([str(tmp_path / "s.vtu")], model, ("s",)).read_cells(slice(None))
    np.testing.assert_allclose(got.material[0][..., :3], ours[..., :3], atol=1e-9 * np.abs(ours).max())
    assert np.isnan(got.material[0][..., 3:]).all()             # transverse shear is not fitted


def test_absolute_z_and_surfaces(tmp_path):
    h = 0.75
    table = ('components = ["sigma1", "sigma2", "tau12"]\n'
             f'locations = [{{ array = "b", z = {-h / 2} }}, {{ array = "t", surface = "top" }},\n'
             '             { array = "m", z = "0.05 mm", ply = 2 }]\n')
    defn, mesh, model, ours = setup(tmp_path, table)
    f = (0.05 - (-0.175)) / 0.3                                  # ply 2 spans z = −0.175 … 0.125
    vtu.write(tmp_path / "s.vtu", mesh, {"b": ours[:, 0, 0, :3], "t": ours[:, 2, 2, :3], "m": at(ours, 1, f)})
    got = SolverPlySource([str(tmp_path / "s.vtu")], model, ("s",)).read_cells(slice(None)).material[0]
    np.testing.assert_allclose(got[:, 0, 0, :3], ours[:, 0, 0, :3], rtol=1e-12)
    np.testing.assert_allclose(got[:, 2, 2, :3], ours[:, 2, 2, :3], rtol=1e-12)
    assert np.isnan(got[:, 1]).all()                             # one position in ply 2: no straight line


def test_per_cell_axes_vectors(tmp_path):
    table = ('axes = "vectors"\nvectors = "axis"\ncomponents = ["sigma_x", "sigma_y", "tau_xy"]\n'
             'pattern = "p{ply}_{point}"\n')
    defn, mesh, model, ours = setup(tmp_path, table)
    theta = np.linspace(-60, 80, mesh.n_cells)
    axis = np.stack([np.cos(np.radians(theta)), np.sin(np.radians(theta)), np.zeros(mesh.n_cells)], 1)
    rotated = material_to_element(ours[None], (ply_angles(model) - theta[:, None])[None, :, :, None], "stress")[0]
    arrays = {"axis": axis}
    for k in range(3):
        for q, p in enumerate(("bottom", "middle", "top")):
            arrays[f"p{k + 1}_{p}"] = rotated[:, k, q, :3]
    vtu.write(tmp_path / "s.vtu", mesh, arrays)
    got = SolverPlySource([str(tmp_path / "s.vtu")], model, ("s",)).read_cells(slice(None)).material[0]
    np.testing.assert_allclose(got[..., :3], ours[..., :3], atol=1e-9 * np.abs(ours).max())


@pytest.mark.parametrize("z", ["0.375", "-0.175"])
def test_z_on_an_interface_needs_a_ply(tmp_path, z):
    from shells.errors import InputError

    table = f'components = ["sigma1", "sigma2", "tau12"]\nlocations = [{{ array = "a", z = {z} }}]\n'
    defn, mesh, model, ours = setup(tmp_path, table)
    vtu.write(tmp_path / "s.vtu", mesh, {"a": ours[:, 0, 0, :3]})
    src = SolverPlySource([str(tmp_path / "s.vtu")], model, ("s",))
    if z == "0.375":                                            # the top of ply 3: fine
        assert np.isfinite(src.read_cells(slice(None)).material).any()
    else:
        with pytest.raises(InputError, match="interface"):
            src.read_cells(slice(None))


def test_global_stress_tensors_on_a_curved_shell(tmp_path):
    """Global 3 × 3 ply stress tensors, T_g = E T_e Eᵀ (E = [x y n] of each cell), projected back on the cells."""
    import tomllib

    from tests.meshes import cylinder

    text = (BASE.replace("orientation = { vector = [1, 0.4, 0] }", "orientation = { vector = [0, 0, 1] }")
            + 'axes = "global"\npattern = "p{ply}_{point}"\n')
    defn = parse_definition(tomllib.loads(text), "def.toml")
    mesh = cylinder(n_theta=12, n_z=2)
    model = build_model(defn, mesh)
    n = mesh.n_cells
    R = np.random.default_rng(10).normal(size=(1, n, 8)) * np.array([50, 40, 20, 9, 8, 5, 3, 2])
    ours = reference_values(model.tables(), model.section, model.phi, R, np.zeros((1, n)), None, None, "stress")[0]
    elem = material_to_element(ours[None], ply_angles(model)[None, :, :, None], "stress")[0]
    E = np.stack([model.frame_x, model.frame_y, model.normal], axis=-1)
    arrays = {}
    for k in range(3):
        for q, p in enumerate(("bottom", "middle", "top")):
            v = elem[:, k, q]
            T = np.zeros((n, 3, 3))
            T[:, 0, 0], T[:, 1, 1], T[:, 0, 1], T[:, 0, 2], T[:, 1, 2] = v[:, 0], v[:, 1], v[:, 2], v[:, 3], v[:, 4]
            T[:, 1, 0], T[:, 2, 0], T[:, 2, 1] = T[:, 0, 1], T[:, 0, 2], T[:, 1, 2]
            arrays[f"p{k + 1}_{p}"] = np.einsum("cia,cab,cjb->cij", E, T, E).reshape(n, 9)
    vtu.write(tmp_path / "g.vtu", mesh, arrays)
    got = SolverPlySource([str(tmp_path / "g.vtu")], model, ("g",)).read_cells(slice(None)).material[0]
    np.testing.assert_allclose(got, ours, atol=1e-9 * np.abs(ours).max())
