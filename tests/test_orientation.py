"""Orientation rules and material angles against analytic directions on flat and cylindrical meshes."""

from __future__ import annotations

import numpy as np
import pytest

from bridge.model.frames import element_frames
from bridge.mesh.shell import ShellMesh
from bridge.definition.orientation import Axis, Field, Vector
from bridge.model.orientation import material_angle, wrap_degrees
from shells.errors import DefinitionError, InputError, MeshError
from tests.meshes import cylinder, cylinder_mid_angles, flat_plate


def angles(rule, mesh, reference=(1, 0, 0)):
    return material_angle(rule, mesh, element_frames(mesh, reference=reference))


@pytest.mark.parametrize("direction, expected", [((1, 0, 0), 0.0), ((1, 1, 0), 45.0), ((0, 1, 0), 90.0),
                                                 ((-1, 0, 0), 180.0), ((1, -1, 0.5), -45.0)])
def test_vector_rule_on_a_flat_plate(direction, expected):
    # element x = X, y = Y on the plate; φ = atan2(d_y, d_x) (analytic geometry)
    mesh = flat_plate()
    np.testing.assert_allclose(angles(Vector(direction), mesh), expected, atol=1e-12)


def test_cylinder_axial_and_hoop_with_axial_element_x():
    mesh = cylinder()
    # element x = e_z, normal e_r, y = e_r × e_z = −e_θ (analytic geometry, cylindrical coordinates)
    axial = angles(Axis((0, 0, 1), (0, 0, 0), "axial"), mesh, reference=(0, 0, 1))
    hoop = angles(Axis((0, 0, 1), (0, 0, 0), "hoop"), mesh, reference=(0, 0, 1))
    np.testing.assert_allclose(axial, 0.0, atol=1e-9)
    np.testing.assert_allclose(hoop, -90.0, atol=1e-9)  # e_θ = −y
    reverse = angles(Axis((0, 0, -1), (0, 0, 0), "hoop"), mesh, reference=(0, 0, 1))
    np.testing.assert_allclose(reverse, 90.0, atol=1e-9)  # right-handed about −Z: −e_θ


def test_cylinder_axial_and_hoop_with_global_x_reference():
    n_theta = 24
    shift = np.array([3.0, -2.0, 7.0])
    base = cylinder(n_theta=n_theta)
    mesh = ShellMesh(base.points + shift, base.blocks)  # axis through `shift`
    t = cylinder_mid_angles(n_theta=n_theta)
    # x = projection of X on the facet = −sign(sin t)·e_θ, y = e_r × x = −sign(sin t)·e_z
    # (analytic geometry)
    sgn = np.sign(np.sin(t))
    hoop = angles(Axis((0, 0, 1), shift, "hoop"), mesh)
    axial = angles(Axis((0, 0, 2), shift, "axial"), mesh)
    np.testing.assert_allclose(hoop, np.where(sgn > 0, 180.0, 0.0), atol=1e-9)
    np.testing.assert_allclose(axial, -90.0 * sgn, atol=1e-9)


def test_hoop_on_a_tilted_cylinder_matches_the_circumferential_tangent():
    rng = np.random.default_rng(3)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    q *= np.sign(np.linalg.det(q))  # a proper rotation
    base = cylinder(n_theta=16, n_z=2)
    mesh = ShellMesh(base.points @ q.T, base.blocks)
    axis = q[:, 2]
    frames = element_frames(mesh)
    phi = material_angle(Axis(tuple(axis), (0, 0, 0), "hoop"), mesh, frames)
    t = cylinder_mid_angles(16, 2)
    e_t = np.column_stack([-np.sin(t), np.cos(t), 0 * t]) @ q.T  # rotated e_θ (analytic geometry)
    x, y, _ = frames
    expect = np.degrees(np.arctan2(np.einsum("ij,ij->i", e_t, y), np.einsum("ij,ij->i", e_t, x)))
    np.testing.assert_allclose(wrap_degrees(phi - expect), 0.0, atol=1e-9)


def test_field_rule_reads_and_wraps_angles():
    base = flat_plate()
    a = np.linspace(-200.0, 370.0, base.n_cells)
    mesh = base.with_cell_data({"ply_ref": a})
    phi = angles(Field("ply_ref"), mesh)
    np.testing.assert_allclose(np.cos(np.radians(phi)), np.cos(np.radians(a)), atol=1e-12)
    assert np.all((phi > -180.0) & (phi <= 180.0))
    np.testing.assert_array_equal(mesh.cell_data["ply_ref"], a)


def test_wrap_degrees_range():
    np.testing.assert_array_equal(wrap_degrees([-180.0, 180.0, 540.0, -190.0, 0.0]), [180, 180, 180, 170, 0])


def test_errors_name_the_rule_and_cells():
    mesh = flat_plate()
    with pytest.raises(DefinitionError, match=r"Vector.*within 5° of the normal on 12 cell") as err:
        angles(Vector((0, 0.01, 1)), mesh)
    assert "0, 1, 2" in str(err.value)
    with pytest.raises(MeshError, match="no cell array 'theta'") as err:
        angles(Field("theta"), mesh.with_cell_data({"other": np.zeros(mesh.n_cells)}))
    assert "other" in str(err.value)
    with pytest.raises(MeshError, match="non-finite"):
        angles(Field("t"), mesh.with_cell_data({"t": np.full(mesh.n_cells, np.nan)}))
    # the axis through the centroid of cell 0 (0.25, 1/6): hoop undefined there
    with pytest.raises(DefinitionError, match="on the axis"):
        angles(Axis((0, 0, 1), (0.25, 1 / 6, 0), "hoop"), mesh)
    with pytest.raises(InputError, match="mode"):
        Axis((0, 0, 1), mode="radial")
    with pytest.raises(DefinitionError, match="zero"):
        Vector((0, 0, 0))


def test_cells_subset_is_evaluated_and_checked_alone():
    # a plate folded along x = 1: left cells in z = 0, right cells in the plane x = 1 (normal along X)
    base = flat_plate(nx=2, ny=1, lx=2.0, ly=1.0)
    pts = base.points.copy()
    right = pts[:, 0] > 1.0
    pts[right, 2], pts[right, 0] = pts[right, 0] - 1.0, 1.0
    mesh = ShellMesh(pts, base.blocks)
    frames = element_frames(mesh, reference=(0, 1, 0))
    with pytest.raises(DefinitionError, match="global cells 1"):
        material_angle(Vector((1, 0, 0)), mesh, frames)
    # on the flat cell alone: X is 90° clockwise of the element x = Y (analytic geometry)
    np.testing.assert_allclose(material_angle(Vector((1, 0, 0)), mesh, frames, cells=[0]), [-90.0], atol=1e-12)
    # hoop about Z through (1, −5): at the centroid (0.5, 0.5, 0), r = (−0.5, 5.5), d = Z × r = (−5.5, −0.5, 0);
    # x = Y, y = n × x = −X, so φ = atan2(5.5, −0.5) (analytic geometry). Cell 1 (hoop along its normal) is left out.
    hoop = material_angle(Axis((0, 0, 1), (1.0, -5.0, 0), "hoop"), mesh, frames, cells=np.array([0]))
    np.testing.assert_allclose(hoop, [np.degrees(np.arctan2(5.5, -0.5))], atol=1e-12)
