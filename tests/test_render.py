"""Pictures of a results store: colours at known cells, legends, field selection, the render command.

Check values are invariants: the colour a cell is drawn with must be the colour map's own value for the cell
(postproc.colors.expected_colour; a face seen square-on under the headlight shows its map colour exactly), and
legends must name what the store says governs (the run's own summary). The plate is tests/meshes.py flat_plate
with uniform resultants per case.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import h5py
import numpy as np
import pytest

from tests.common import KAW_PLY_TOML, assert_one_line_error, run_cli
from tests.meshes import flat_plate

#: A two-zone plate definition, with a material named like a script (escaped in the report) and 2 hot spots.
EVIL = "<script>alert(1)</script>"
DEFINITION = f"""units = "N-mm"
[analysis]
hot_spots = 2
[materials."{EVIL}"]
""" + KAW_PLY_TOML + f"""thickness = 1.0
alpha1 = "0.02e-6/degC"
alpha2 = "22.5e-6/degC"
[materials."{EVIL}".strain_limits]
fibre_tension = 0.0083
fibre_compression = 0.0083
matrix_tension = 0.0039
matrix_compression = 0.024
shear = 0.0095
[laminates.one]
layup = "[60]"
material = "{EVIL}"
[laminates.qi]
layup = "[0/45/-45/90]s"
material = "{EVIL}"
thickness = 0.125
[[zones]]
laminate = "one"
select = {{ tag = "block", values = [0] }}
[[zones]]
laminate = "qi"
[cases.a]
step = 1
[cases.b]
step = 2
kind = "ultimate"
delta_T = -100
"""
RESULTANTS = np.array([[2.0, -3.0, 4.0, 0.0, 0.0, 0.0, 0.0, 0.0], [2.0, -3.0, 4.0, 0.5, 0.0, 0.0, 0.0, 3.0]])
TOL = 12  # of 255: software / hardware OpenGL and the 256-entry colour table (compare colours, never image hashes)


def build_store(base: Path) -> Path:
    """A --store plies results store of the 12-cell two-zone plate (built once per test session)."""
    store = base / "plate-store" / "out.h5"
    if store.exists():
        return store
    from bridge.mesh.formats import write_mesh
    from bridge.recover.resultants import write_resultants_h5

    folder = store.parent
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "def.toml").write_text(DEFINITION, encoding="utf-8")
    write_mesh(folder / "plate.vtu", flat_plate(), {"block": np.repeat(np.array([0, 1], dtype=np.int32), 6)})
    write_resultants_h5(folder / "res.h5", ["a", "b"], np.repeat(RESULTANTS[:, None, :], 12, axis=1))
    tmp = folder / "building.h5"
    proc = run_cli("recover", folder / "def.toml", folder / "plate.vtu", folder / "res.h5", "-o", tmp,
                   "--store", "plies", "--quiet")
    assert proc.returncode == 0, proc.stderr
    tmp.replace(store)
    return store


@pytest.fixture(scope="module")
def store(tmp_path_factory) -> Path:
    return build_store(tmp_path_factory.getbasetemp())


@pytest.fixture(scope="module")
def envelope_store(store, tmp_path_factory) -> Path:
    """The same store without /plies (as recover --store envelope leaves it)."""
    out = tmp_path_factory.mktemp("env") / "env.h5"
    shutil.copy(store, out)
    with h5py.File(out, "a") as h5:
        del h5["plies"]
    return out


def colour_at(pic, cell: int) -> np.ndarray:
    row, col = pic.cell_pixels[cell]
    assert row >= 0, f"cell {cell} is off the picture"
    return pic.image[row, col].astype(float)


TOP = ((1.0, 0.5, 6.0), (1.0, 0.5, 0.0), (0.0, 1.0, 0.0))  # fixed camera above the plate, looking down -z


@pytest.mark.parametrize("kind", ["sequential", "diverging", "categorical"])
def test_cell_colours_match_the_map(kind):
    from postproc.colors import expected_colour
    from postproc.render import draw_field

    mesh = flat_plate()
    values = np.linspace(-2.0, 5.0, 12) if kind != "categorical" else np.arange(12) % 4
    values = values.astype(float)
    values[7] = np.nan
    before = values.copy()
    labels = ["ply 1", "ply 2", "ply 3", "ply 4"] if kind == "categorical" else None
    pic = draw_field(mesh.points, mesh.blocks, values, kind=kind, labels=labels, title="t", bar_title="v [-]",
                     views=(TOP,), size=(480, 360), mark=11, mark_label="worst")
    np.testing.assert_array_equal(values, before)  # the caller's array is untouched
    assert pic.image.shape == (360, 480, 3) and pic.image.std() > 10  # not blank
    for cell in (4, 5, 6, 7, 8, 9, 10):  # the rows above the legend (lower left); the mark is on 11
        want = 255 * expected_colour(kind, values[cell], pic.limits or (0, 0), 4)
        np.testing.assert_allclose(colour_at(pic, cell), want, atol=TOL, err_msg=f"cell {cell}")


def test_diverging_scale_puts_zero_at_the_centre():
    from postproc.colors import balance_position, diverging_limits

    assert diverging_limits(np.array([0.5, 3.0, np.nan])) == (0.0, 3.0)  # all positive: zero at the pale end
    np.testing.assert_allclose(balance_position([-1.0, 0.0, 4.0], -1.0, 4.0), [0.0, 0.5, 1.0])


def test_no_value_cells_are_grey_and_named_in_the_legend():
    from postproc.colors import NO_VALUE, hex_to_rgb
    from postproc.render import draw_field

    mesh = flat_plate()
    values = np.full(12, np.nan)
    values[:6] = 1.0
    pic = draw_field(mesh.points, mesh.blocks, values, kind="sequential", title="t", bar_title="R [-]",
                     views=("+normal",), size=(400, 300))
    np.testing.assert_allclose(colour_at(pic, 9), 255 * hex_to_rgb(NO_VALUE), atol=TOL)
    assert pic.legend[0][0].startswith("no value (6 cells")


@pytest.mark.parametrize("field, names", [
    # the summary's hot spots: zone-1 ply 1 (the single 60° ply of laminate one), zone-2 ply 4 (the 90° of qi)
    ("critical-ply", ["ply 1: 60° <script>alert(1)</script>, one (zone-1)",
                      "ply 4: 90° <script>alert(1)</script>, qi (zone-2)"]),
    ("case", ["a", "b"]),
    ("criterion", ["hashin"]),
    # zone 1, Kaw's 60° lamina: Hashin's fibre-tension form (σ1/Xt)² + (τ12/S12)² = 1 first (R 16.32); matrix
    # compression comes later since S_T from the fracture plane (0.377·Yc) makes compression raise the shear
    # strength. Zone 2: matrix tension.
    ("mode", ["matrix tension, hashin", "fibre tension, hashin"]),
])
def test_categorical_legends_list_the_names(store, tmp_path, field, names):
    from bridge.pictures.render import render_store

    drawn = render_store(store, tmp_path / "map.png", field=field, size=(320, 240))
    labels = [label for label, _ in drawn["legend"]]
    assert sorted(labels[:-1]) == sorted(names) and labels[-1].startswith("ringed: the worst cell")
    assert (tmp_path / "map.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_margin_map_marks_the_worst_cell_and_writes_cell_data(store, tmp_path):
    from bridge.pictures.render import render_store
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        worst = st.run.summary.worst
    drawn = render_store(store, tmp_path / "m.png", size=(320, 240), cell_data=tmp_path / "m.vtu")
    assert drawn["cell"] == worst.cell and drawn["value"] == pytest.approx(worst.min_margin)
    import pyvista as pv

    grid = pv.read(tmp_path / "m.vtu")
    assert grid.cell_data["margin"][worst.cell] == pytest.approx(worst.min_margin)


def test_ply_stress_at_a_case_and_ply(store, tmp_path):
    from bridge.pictures.fields import select_field
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        f = select_field(st, "sigma2", ply=2, case="b")
        s2 = st.array("plies/stress")[1, :, 1, :, 1]
    assert np.isnan(f.values[:6]).all()  # zone-1 has one ply: no ply 2
    np.testing.assert_allclose(f.values[6:], s2[6:, np.argmax(np.abs(s2[6]))])


def test_cli_several_views_and_a_camera(store, tmp_path):
    out = tmp_path / "views.png"
    proc = run_cli("render", store, "-o", out, "--field", "strength-ratio", "--view", "iso", "--view", "top",
                   "--camera", "1,0.5,6;1,0.5,0;0,1,0", "--size", "600x200")
    assert proc.returncode == 0, proc.stderr
    assert "field\tstrength-ratio\n" in proc.stdout and "views\tiso\nviews\ttop\nviews\tcamera\n" in proc.stdout
    import matplotlib.image as mpimg

    assert mpimg.imread(out).shape[:2] == (200, 600)


def test_cli_errors_are_one_line(envelope_store, store, tmp_path):
    assert_one_line_error(run_cli("render", envelope_store, "-o", tmp_path / "x.png", "--field", "sigma1"),
                          "--store plies")
    assert_one_line_error(run_cli("render", store, "-o", tmp_path / "x.png", "--field", "stress:s1"),
                          "retired", "'sigma1'")
    assert_one_line_error(run_cli("render", store, "-o", tmp_path / "x.png", "--case", "zz"), "'zz'", "a, b")
    assert_one_line_error(run_cli("render", store, "-o", tmp_path / "x.png", "--size", "big"), "WIDTHxHEIGHT")
    assert not (tmp_path / "x.png").exists()
