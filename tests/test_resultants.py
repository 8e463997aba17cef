"""Resultant readers, settings and frame rotation.

Reference for the rotation: the stress-resultant tensor S = [[Nx, Nxy], [Nxy, Ny]]
transforms as S_e = Q·S·Qᵀ with Q the 2×2 rotation by θ, and Q = (Qx, Qy) as a
vector, Q_e = Q·Q_in (common practice: a symmetric 2-tensor and a vector under
a rotation of axes). The three input kinds are checked against one array
written through each kind (meshio writes the VTU files; h5py the HDF5 and XDMF
heavy data).
"""

from __future__ import annotations

import h5py
import numpy as np
import pytest

from bridge.mesh.formats import vtu
from bridge.model.frames import element_frames
from bridge.definition.resultants import ResultantFields, ResultantSettings
from bridge.recover.resultants import nonfinite_mask, read_resultants, to_element_frame
from bridge.recover.writers import resultant_arrays, write_resultants_h5, write_resultants_xdmf
from shells.errors import InputError, ResultantsError
from tests.meshes import mixed_plate, warped_plate

CASES = ("pull", "bend", "shear")


@pytest.fixture
def mesh():
    return mixed_plate()


@pytest.fixture
def R(mesh):
    return np.random.default_rng(11).normal(size=(len(CASES), mesh.n_cells, 8))


def write_all_kinds(tmp_path, mesh, R, fields=ResultantFields()):
    """The same resultants in every input kind; returns {kind: path or list of paths}."""
    write_resultants_xdmf(tmp_path / "series.xdmf", mesh, CASES, R, fields)
    write_resultants_h5(tmp_path / "res.h5", CASES, R)
    paths = []
    for k, case in enumerate(CASES):
        paths.append(tmp_path / f"{case}.vtu")
        vtu.write(paths[-1], mesh, resultant_arrays(R[k], fields))
    suffixed = {f"{name}@{case}": arr for k, case in enumerate(CASES)
                for name, arr in resultant_arrays(R[k], fields).items()}
    vtu.write(tmp_path / "all.vtu", mesh, suffixed)
    return {"xdmf": tmp_path / "series.xdmf", "h5": tmp_path / "res.h5", "vtu_files": paths,
            "vtu_suffixed": tmp_path / "all.vtu"}


@pytest.mark.parametrize("fields", [ResultantFields(), ResultantFields(n="SF", m="SM", q="SQ"),
                                    ResultantFields(scalars=("nx", "ny", "nxy", "mx", "my", "mxy", "qx", "qy"))],
                         ids=["default", "renamed", "scalars"])
def test_all_input_kinds_give_the_same_array(tmp_path, mesh, R, fields):
    for kind, src in write_all_kinds(tmp_path, mesh, R, fields).items():
        names, got = read_resultants(src, mesh.n_cells, fields)
        assert names == CASES, kind
        np.testing.assert_array_equal(got, R, err_msg=kind)


def test_h5_layout_is_chunked(tmp_path, R):
    write_resultants_h5(tmp_path / "r.h5", CASES, R)
    with h5py.File(tmp_path / "r.h5", "r") as h5:
        ds = h5["resultants"]
        assert ds.chunks == (1, R.shape[1], 8) and ds.compression == "gzip"
        assert [str(s, "utf-8") if isinstance(s, bytes) else s for s in h5["case_names"][()]] == list(CASES)


def test_case_selection_and_unknown_cases(tmp_path, mesh, R):
    src = write_all_kinds(tmp_path, mesh, R)["h5"]
    names, got = read_resultants(src, mesh.n_cells, cases=["shear", "pull"])
    assert names == ("shear", "pull")
    np.testing.assert_array_equal(got, R[[2, 0]])
    with pytest.raises(ResultantsError, match=r"unknown load case.*'torsion'") as err:
        read_resultants(src, mesh.n_cells, cases=["torsion"])
    assert "res.h5" in str(err.value)


def test_unit_scales_and_twist_sign(tmp_path, mesh, R):
    src = write_all_kinds(tmp_path, mesh, R)["xdmf"]
    # solver in N and m, definition in N and mm: N, Q per length scale by 1/1000; M (force) unchanged
    s = ResultantSettings(force_scale=1.0, length_scale=1000.0, twist_sign=-1)
    _, got = read_resultants(src, mesh.n_cells, settings=s)
    expect = R.copy()
    expect[..., [0, 1, 2, 6, 7]] /= 1000.0
    expect[..., 5] *= -1.0
    np.testing.assert_allclose(got, expect, rtol=1e-15)
    _, got = read_resultants(src, mesh.n_cells, settings=ResultantSettings(force_scale=4.448))
    np.testing.assert_allclose(got, R * 4.448, rtol=1e-15)


def reference_rotation(R, theta):
    """Independent check: S_e = Q S Qᵀ on the 2×2 tensors, Q_e = Q q (see the module docstring)."""
    out = np.empty_like(R)
    for c in range(R.shape[-2]):
        co, si = np.cos(theta[c]), np.sin(theta[c])
        rot = np.array([[co, -si], [si, co]])
        for case in range(R.shape[0]):
            for k0 in (0, 3):
                nx, ny, nxy = R[case, c, k0:k0 + 3]
                s = rot @ np.array([[nx, nxy], [nxy, ny]]) @ rot.T
                out[case, c, k0:k0 + 3] = s[0, 0], s[1, 1], s[0, 1]
            out[case, c, 6:8] = rot @ R[case, c, 6:8]
    return out


def test_laminate_to_element_rotation_matches_tensor_rotation(R):
    phi = np.random.default_rng(5).uniform(-180, 180, R.shape[1])
    got = to_element_frame(R, "laminate", phi)
    np.testing.assert_allclose(got, reference_rotation(R, np.radians(phi)), atol=1e-12)
    # invariants: trace of N and |Q| (common practice)
    np.testing.assert_allclose(got[..., 0] + got[..., 1], R[..., 0] + R[..., 1], atol=1e-12)
    np.testing.assert_allclose(np.hypot(got[..., 6], got[..., 7]), np.hypot(R[..., 6], R[..., 7]), atol=1e-12)
    np.testing.assert_array_equal(to_element_frame(R, "element"), R)


def test_vectors_frame_on_a_warped_mesh(tmp_path):
    mesh = warped_plate()
    frames = element_frames(mesh)
    x, y, n = frames
    psi = np.random.default_rng(2).uniform(-np.pi, np.pi, mesh.n_cells)
    v = 3.0 * (np.cos(psi)[:, None] * x + np.sin(psi)[:, None] * y) + 0.4 * n  # off-plane part is projected away
    R = np.random.default_rng(9).normal(size=(2, mesh.n_cells, 8))
    np.testing.assert_allclose(to_element_frame(R, "vectors", frames=frames, vectors=v),
                               reference_rotation(R, psi), atol=1e-12)
    # through the reader, with the vectors taken from the file's cell array and the twist sign applied first
    vtu.write(tmp_path / "c.vtu", mesh, {**resultant_arrays(R[0]), "xvec": v})
    s = ResultantSettings(frame="vectors", vectors="xvec", twist_sign=-1)
    _, got = read_resultants([tmp_path / "c.vtu"], mesh.n_cells, settings=s, frames=frames)
    flipped = R[:1].copy()
    flipped[..., 5] *= -1
    np.testing.assert_allclose(got, reference_rotation(flipped, psi), atol=1e-12)


def test_laminate_frame_through_the_reader(tmp_path, mesh, R):
    src = write_all_kinds(tmp_path, mesh, R)["vtu_suffixed"]
    phi = np.linspace(-90, 90, mesh.n_cells)
    _, got = read_resultants(src, mesh.n_cells, settings=ResultantSettings(frame="laminate"),
                             material_angle_deg=phi)
    np.testing.assert_allclose(got, reference_rotation(R, np.radians(phi)), atol=1e-12)
    with pytest.raises(ResultantsError, match="material angle"):
        read_resultants(src, mesh.n_cells, settings=ResultantSettings(frame="laminate"))


def test_missing_arrays_are_named(tmp_path, mesh, R):
    vtu.write(tmp_path / "a.vtu", mesh, {"N": R[0, :, :3], "Mom": R[0, :, 3:6], "Q": R[0, :, 6:]})
    with pytest.raises(ResultantsError, match=r"missing resultant array\(s\) 'M'.*found 'Mom', 'N', 'Q'") as err:
        read_resultants(tmp_path / "a.vtu", mesh.n_cells)
    assert "a.vtu" in str(err.value)
    # no transverse shear from the solver: q=None gives zero Q
    _, got = read_resultants(tmp_path / "a.vtu", mesh.n_cells, ResultantFields(m="Mom", q=None))
    np.testing.assert_array_equal(got[0, :, 6:], 0.0)


def test_wrong_components_and_cell_count(tmp_path, mesh, R):
    vtu.write(tmp_path / "a.vtu", mesh, {"N": R[0, :, :2], "M": R[0, :, 3:6], "Q": R[0, :, 6:]})
    with pytest.raises(ResultantsError, match=r"'N'.*2 component.*expected 3"):
        read_resultants(tmp_path / "a.vtu", mesh.n_cells)
    write_resultants_h5(tmp_path / "r.h5", CASES, R)
    with pytest.raises(ResultantsError, match=rf"{mesh.n_cells} cells but the mesh has {mesh.n_cells + 1}"):
        read_resultants(tmp_path / "r.h5", mesh.n_cells + 1)
    write_resultants_xdmf(tmp_path / "s.xdmf", mesh, CASES, R)
    with pytest.raises(ResultantsError, match=rf"{mesh.n_cells} shell cells but the mesh has 5"):
        read_resultants(tmp_path / "s.xdmf", 5)


def test_nonfinite_values(tmp_path, mesh, R):
    bad = R.copy()
    bad[1, 3, 4] = np.nan
    bad[2, 7, 0] = np.inf
    write_resultants_xdmf(tmp_path / "s.xdmf", mesh, CASES, bad)
    with pytest.raises(ResultantsError, match=r"'bend' \(cells 3\); 'shear' \(cells 7\)"):
        read_resultants(tmp_path / "s.xdmf", mesh.n_cells)
    _, got = read_resultants(tmp_path / "s.xdmf", mesh.n_cells, allow_nonfinite=True)
    mask = nonfinite_mask(got)
    assert mask.shape == (3, mesh.n_cells)
    assert set(zip(*np.nonzero(mask))) == {(1, 3), (2, 7)}


def test_h5_errors_and_settings_validation(tmp_path, mesh):
    with h5py.File(tmp_path / "x.h5", "w") as h5:
        h5["other"] = np.zeros(3)
    with pytest.raises(ResultantsError, match="no dataset /resultants; found other"):
        read_resultants(tmp_path / "x.h5", mesh.n_cells)
    with pytest.raises(ResultantsError, match="twist_sign"):
        ResultantSettings(twist_sign=2)
    with pytest.raises(ResultantsError, match="frame"):
        ResultantSettings(frame="sideways")
    with pytest.raises(InputError, match="8 names"):
        ResultantFields(scalars=("a", "b"))
    with pytest.raises(ResultantsError, match="duplicate"):
        write_resultants_h5(tmp_path / "d.h5", ["a", "a"], np.zeros((2, 3, 8)))


def test_reader_does_not_touch_caller_arrays(mesh, R):
    phi = np.zeros(mesh.n_cells)
    before = R.copy()
    to_element_frame(R, "laminate", phi)
    np.testing.assert_array_equal(R, before)


def test_xdmf_case_names_fall_back_to_time_values(tmp_path, mesh, R):
    write_resultants_xdmf(tmp_path / "s.xdmf", mesh, CASES, R)
    text = (tmp_path / "s.xdmf").read_text()
    stripped = "\n".join(line for line in text.splitlines() if "<Information" not in line)
    (tmp_path / "t.xdmf").write_text(stripped.replace('Value="1"', 'Value="2.5"'))
    (tmp_path / "s.h5").rename(tmp_path / "t.h5")
    (tmp_path / "t.xdmf").write_text((tmp_path / "t.xdmf").read_text().replace("s.h5:", "t.h5:"))
    names, got = read_resultants(tmp_path / "t.xdmf", mesh.n_cells)
    assert names == ("0", "2.5", "2")
    np.testing.assert_array_equal(got, R)


def _h5_with_columns(path, R, components):
    """An HDF5 /resultants file whose columns are in the order ``components`` says (None: no attribute)."""
    from bridge.definition.resultants import COMPONENTS

    order = [COMPONENTS.index(c) for c in components] if components and len(set(components)) == 8 and \
        set(components) <= set(COMPONENTS) else list(range(8))
    with h5py.File(path, "w") as h5:
        ds = h5.create_dataset("resultants", data=R[..., order])
        h5["case_names"] = np.array(CASES, dtype=h5py.string_dtype())
        if components is not None:
            ds.attrs["components"] = np.array(components, dtype=h5py.string_dtype())
    return path


def test_h5_columns_follow_the_components_attribute(tmp_path, mesh, R):
    """Columns named in another order are read by name; their order is never assumed silently."""
    from bridge.recover.resultants import ResultantSource

    swapped = ["Nx", "Ny", "Nxy", "Mx", "My", "Mxy", "Qy", "Qx"]
    shuffled = ["Qy", "Mxy", "Nx", "My", "Qx", "Ny", "Mx", "Nxy"]
    for components in (swapped, shuffled):
        src = ResultantSource(_h5_with_columns(tmp_path / "c.h5", R, components), mesh.n_cells)
        np.testing.assert_array_equal(src.read(0, mesh.n_cells), R)
        np.testing.assert_array_equal(src.read_cells(np.array([1, 4])), R[:, [1, 4]])
        assert any("mapped by name" in n for n in src.notes)
    src = ResultantSource(_h5_with_columns(tmp_path / "n.h5", R, None), mesh.n_cells)
    np.testing.assert_array_equal(src.read(0, mesh.n_cells), R)
    assert any("no components attribute" in n for n in src.notes)
    for bad, needle in ((["Nx", "Nx", "Nxy", "Mx", "My", "Mxy", "Qx", "Qy"], "twice"),
                        (["Nx", "Ny", "Nxy", "Mx", "My", "Mxy", "Vx", "Qy"], "unknown names Vx"),
                        (["Nx", "Ny", "Nxy", "Mx", "My", "Mxy", "Qx"], "has 7 names")):
        with pytest.raises(ResultantsError, match=needle):
            ResultantSource(_h5_with_columns(tmp_path / "b.h5", R, bad), mesh.n_cells)
