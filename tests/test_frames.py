"""Element frames against analytic geometry (flat, warped and cylindrical meshes of tests/meshes.py)."""

from __future__ import annotations

import numpy as np
import pytest

from bridge.model.frames import element_frames
from bridge.mesh.shell import ShellMesh
from shells.errors import MeshError
from tests.meshes import cylinder, cylinder_mid_angles, flat_plate, mixed_plate, quadratic_plate, warped_plate


def assert_orthonormal_right_handed(x, y, n):
    eye = np.eye(3)
    frames = np.stack([x, y, n], axis=1)  # (cells, 3, 3), rows x, y, n
    np.testing.assert_allclose(frames @ frames.transpose(0, 2, 1), np.broadcast_to(eye, frames.shape), atol=1e-12)
    np.testing.assert_allclose(np.linalg.det(frames), 1.0, atol=1e-12)


@pytest.mark.parametrize("mesh", [flat_plate(kind="quad"), flat_plate(kind="triangle"), mixed_plate(),
                                  quadratic_plate()], ids=["quad", "tri", "mixed", "quadratic"])
def test_flat_plate_frames_are_global_axes(mesh):
    # A plate in z = 0 with counter-clockwise cells: n = +Z, x = X, y = Y (analytic geometry).
    x, y, n = element_frames(mesh)
    np.testing.assert_allclose(n, np.tile([0, 0, 1.0], (mesh.n_cells, 1)), atol=1e-15)
    np.testing.assert_allclose(x, np.tile([1.0, 0, 0], (mesh.n_cells, 1)), atol=1e-15)
    np.testing.assert_allclose(y, np.tile([0, 1.0, 0], (mesh.n_cells, 1)), atol=1e-15)


def test_reversed_node_order_flips_the_normal():
    m = flat_plate()
    flipped = ShellMesh(m.points, (("quad", m.blocks[0][1][:, ::-1]),))
    x, y, n = element_frames(flipped, reference=(1, 1, 0))
    np.testing.assert_allclose(n[:, 2], -1.0, atol=1e-15)
    np.testing.assert_allclose(x, np.tile([1, 1, 0], (m.n_cells, 1)) / np.sqrt(2), atol=1e-15)
    np.testing.assert_allclose(y, np.tile([1, -1, 0], (m.n_cells, 1)) / np.sqrt(2), atol=1e-15)  # n × x


def test_warped_quads_normal_is_the_surface_normal_at_the_centre():
    a = 0.3
    mesh = warped_plate(a=a)
    c = mesh.centroids()
    # z = a·x·y: normal ∝ (−a·y, −a·x, 1) at (x_c, y_c) (analytic geometry;
    # bilinear cells reproduce the surface)
    exact = np.column_stack([-a * c[:, 1], -a * c[:, 0], np.ones(len(c))])
    exact /= np.linalg.norm(exact, axis=1, keepdims=True)
    x, y, n = element_frames(mesh)
    np.testing.assert_allclose(n, exact, atol=1e-13)
    assert_orthonormal_right_handed(x, y, n)
    # x is the projection of X on the element plane (analytic: X − (X·n) n, normalised)
    px = np.array([1.0, 0, 0]) - exact[:, :1] * exact
    np.testing.assert_allclose(x, px / np.linalg.norm(px, axis=1, keepdims=True), atol=1e-13)


@pytest.mark.parametrize("kind", ["quad", "triangle"])
def test_cylinder_normals_point_outward_radially(kind):
    mesh = cylinder(kind=kind)
    x, y, n = element_frames(mesh, reference=(0, 0, 1))
    t = cylinder_mid_angles()
    # quad facets are rectangles between angles t_m ± Δ/2: normal (cos t_m, sin t_m, 0) (analytic geometry)
    if kind == "quad":
        np.testing.assert_allclose(n, np.column_stack([np.cos(t), np.sin(t), 0 * t]), atol=1e-13)
    np.testing.assert_allclose(n[:, 2], 0.0, atol=1e-13)
    np.testing.assert_allclose(x, np.tile([0, 0, 1.0], (mesh.n_cells, 1)), atol=1e-13)
    assert_orthonormal_right_handed(x, y, n)


def test_fallback_when_reference_is_near_the_normal():
    mesh = flat_plate()
    # 4° off the normal (inside the 5° cone): X is used
    x, _, _ = element_frames(mesh, reference=(0.0, np.sin(np.radians(4.0)), np.cos(np.radians(4.0))))
    np.testing.assert_allclose(x, np.tile([1.0, 0, 0], (mesh.n_cells, 1)), atol=1e-15)
    # 6° off the normal: the projection is used, along +Y
    x, _, _ = element_frames(mesh, reference=(0.0, np.sin(np.radians(6.0)), np.cos(np.radians(6.0))))
    np.testing.assert_allclose(x, np.tile([0, 1.0, 0], (mesh.n_cells, 1)), atol=1e-15)
    # a plate in the Y-Z plane (normal +X) with reference X: the next axis, Y, is used
    yz = ShellMesh(mesh.points[:, [2, 0, 1]], mesh.blocks)
    x, _, n = element_frames(yz)
    np.testing.assert_allclose(n, np.tile([1.0, 0, 0], (mesh.n_cells, 1)), atol=1e-15)
    np.testing.assert_allclose(x, np.tile([0, 1.0, 0], (mesh.n_cells, 1)), atol=1e-15)


def test_fallback_on_a_cylinder_only_where_needed():
    mesh = cylinder(n_theta=72)  # mid angles 2.5°, 7.5°, ...: four per ring within 5° of ±X
    t = cylinder_mid_angles(n_theta=72)
    x, _, _ = element_frames(mesh)
    e_t = np.column_stack([-np.sin(t), np.cos(t), 0 * t])
    near = np.abs(np.cos(t)) > np.cos(np.radians(5.0))
    # analytic: away from ±X, x = projection of X = −sign(sin t)·e_θ;
    # near ±X, the projection of Y = sign(cos t)·e_θ
    expect = np.where(near[:, None], np.sign(np.cos(t))[:, None] * e_t, -np.sign(np.sin(t))[:, None] * e_t)
    assert near.sum() == 4 * 3  # t_m = 2.5°, 177.5°, 182.5°, 357.5° on each of 3 rings
    np.testing.assert_allclose(x, expect, atol=1e-12)


def test_per_cell_vectors_override_the_reference():
    mesh = flat_plate()
    v = np.tile([0.0, 2.0, 5.0], (mesh.n_cells, 1))
    v[0] = [1.0, 1.0, -3.0]
    x, y, _ = element_frames(mesh, reference=(1, 0, 0), per_cell=v)
    np.testing.assert_allclose(x[1:], np.tile([0, 1.0, 0], (mesh.n_cells - 1, 1)), atol=1e-15)
    np.testing.assert_allclose(x[0], [2 ** -0.5, 2 ** -0.5, 0], atol=1e-15)
    with pytest.raises(MeshError, match="per-cell"):
        element_frames(mesh, per_cell=v[:3])


def test_degenerate_cells_are_listed():
    pts = np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [2, 0, 0], [3, 0, 0]], float)
    mesh = ShellMesh(pts, (("triangle", [[0, 1, 2], [0, 0, 2], [1, 2, 2], [0, 3, 4]]),))
    with pytest.raises(MeshError, match=r"3 degenerate cell.*1, 2, 3"):
        element_frames(mesh)


def test_bad_reference_and_caller_arrays_untouched():
    mesh = warped_plate()
    with pytest.raises(MeshError, match="reference"):
        element_frames(mesh, reference=(0, 0, 0))
    per_cell = np.tile([1.0, 0.5, 0.0], (mesh.n_cells, 1))
    before = per_cell.copy()
    element_frames(mesh, per_cell=per_cell)
    np.testing.assert_array_equal(per_cell, before)
