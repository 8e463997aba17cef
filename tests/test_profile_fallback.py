"""A profile drawn from /plies when the run's inputs are gone shows failure indices exactly as the run computed
them, or none, with a note: never indices computed differently (nothing held, wrinkling per ply).

Check values: the run's own stored states (/hotspots, computed with the thermal part held and face-level
criteria on each face's mean stress) are the reference; the plies route must equal them to round-off wherever it
shows a failure index. Materials: Kaw, Mechanics of Composite Materials, 2nd ed. 2006, Table 2.1 (graphite/epoxy);
the core and every load are invented for the test.
"""

from __future__ import annotations

import shutil

import numpy as np
import pytest

from tests.common import KAW_PLY_TOML, run_cli
from tests.meshes import flat_plate

DEFINITION = """units = "N-mm"
[materials.cf]
""" + KAW_PLY_TOML + """fibre = "carbon"
thickness = 0.125
alpha1 = "0.02e-6/degC"
alpha2 = "22.5e-6/degC"
beta2 = 0.4
knockdown = { environment = 0.9, damage = 0.8 }
[materials.core]
kind = "core"
G13 = "60 MPa"
G23 = "32 MPa"
Ez = "190 MPa"
S13 = "2.0 MPa"
S23 = "1.1 MPa"
Zc = "4.0 MPa"
cell_size = "3.2 mm"
[laminates.sand]
layup = "[0/90/45/0:core@10*]s"
material = "cf"
[laminates.mono]
layup = "[0/45/-45/90]s"
material = "cf"
[analysis]
criteria = ["max-stress", "max-strain", "tsai-wu", "hashin", "puck", "larc03", "core-shear", "core-crushing",
            "wrinkling", "dimpling"]
hot_spots = 2
[[zones]]
select = { tag = "block", values = [0] }
name = "sand"
laminate = "sand"
[[zones]]
laminate = "mono"
name = "mono"
[cases.mech]
description = "resultants only"
step = 1
[cases.cold]
kind = "ultimate"
step = 2
delta_T = -80
delta_M = 0.004
pressure = 0.1
[cases.cooldown]
step = 3
kind = "ultimate"
held = true
delta_T = -100
[cases.field]
step = 2
temperature_field = "dT"
[combinations.flight-cold]
factors = { mech = 1.0, cooldown = 1.0 }
kind = "ultimate"
"""
#: Plain cases (fixed part: uniform ΔT, ΔM) and cases whose fixed part needs the inputs (held, mesh ΔT).
PLAIN, NEEDS_INPUTS = ("mech", "cold"), ("cooldown", "field", "flight-cold")


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    from bridge.mesh.formats import write_mesh
    from bridge.recover.resultants import write_resultants_h5

    folder = tmp_path_factory.mktemp("fallback")
    mesh = flat_plate(4, 2)
    n = mesh.n_cells
    block = (np.arange(n) % 4 < 2).astype(np.int32) ^ 1          # cells 0, 1, 4, 5 monolithic; 2, 3, 6, 7 sandwich
    write_mesh(folder / "plate.vtu", mesh, {"block": block, "dT": np.linspace(-90.0, -20.0, n)})
    rng = np.random.default_rng(7)
    R = rng.normal(0.0, 1.0, (3, n, 8)) * np.array([40, 30, 15, 20, 15, 5, 3, 2])
    write_resultants_h5(folder / "res.h5", ["1", "2", "3"], R)
    (folder / "def.toml").write_text(DEFINITION, encoding="utf-8")
    proc = run_cli("recover", folder / "def.toml", folder / "plate.vtu", folder / "res.h5", "-o",
                   folder / "out.h5", "--store", "plies", "--quiet")
    assert proc.returncode == 0, proc.stderr
    return folder / "out.h5"


def test_plies_route_equals_the_run_where_it_shows_an_index(store):
    """Every stored cell (both zones: sandwich faces with wrinkling and dimpling, a monolithic wall), every case:
    the failure indices rebuilt from /plies equal the run's stored ones (held thermal and moisture part,
    pressure, knockdowns, face means), or are left out with a note for held and mesh-ΔT cases."""
    from bridge.pictures.plots import _plies_route, _section_of_cell, profile_of
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        stored = st.array("hotspots/cell").tolist()
        zones = {int(st.h5["model/zone"][c]) for c in stored}
        assert zones == {0, 1}, "both zones' worst cells are stored"
        for cell in stored:
            sec = _section_of_cell(st, cell)
            for name in PLAIN + NEEDS_INPUTS:
                ref, _, _, source = profile_of(st, cell, name)
                assert source == "stored"
                k = st.case_names.index(name)
                stress, fi, note = _plies_route(st, cell, k, sec)
                np.testing.assert_allclose(stress, ref.stress, rtol=1e-9, atol=1e-9)
                if name in NEEDS_INPUTS:
                    assert fi == {} and note.startswith("failure indices not shown: case " + name), note
                    continue
                assert note == ""
                assert set(ref.failure_index) <= set(fi)
                for crit, value in ref.failure_index.items():
                    np.testing.assert_allclose(fi[crit], value, rtol=1e-9, atol=1e-12, err_msg=f"{cell} {name} {crit}")
                if name == "cold":       # a held thermal part: the old route (nothing held) would differ here
                    assert np.nanmax(np.abs(st.h5["hotspots/fixed"][k, stored.index(cell)])) > 1.0


def test_criteria_that_do_not_apply_are_left_out_and_named(store):
    from bridge.pictures.plots import profile_of
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        zone = st.array("model/zone")
        for cell in st.array("hotspots/cell").tolist():
            prof = profile_of(st, cell, "mech")[0]
            if zone[cell] == 1:                # the monolithic wall
                assert set(prof.failure_index).isdisjoint({"core-shear", "core-crushing", "wrinkling", "dimpling"})
                assert any("not applicable to this section: core-shear, core-crushing, wrinkling, dimpling" in n
                           for n in prof.notes)
            else:
                assert {"core-shear", "wrinkling"} <= set(prof.failure_index)


def test_a_plain_cell_without_inputs_is_drawn_from_plies_with_notes(store, tmp_path):
    """With the inputs gone, a cell that is not stored comes from /plies: a plain case shows the run's indices,
    a held case none; both say so on stdout (note lines) and under the figure."""
    from bridge.results.store import StoreReader

    hidden = tmp_path / "hidden"
    hidden.mkdir()
    names = ("def.toml", "plate.vtu", "res.h5")
    for name in names:                                   # the run's inputs gone (restored after the test)
        shutil.move(store.parent / name, hidden / name)
    try:
        with StoreReader(store) as st:
            cell = next(c for c in range(8) if c not in st.array("hotspots/cell").tolist())
        for case, shown in (("cold", True), ("flight-cold", False)):
            out = tmp_path / f"{case}.png"
            proc = run_cli("plot", store, "-o", out, "--cell", cell, "--case", case)
            assert proc.returncode == 0, proc.stderr
            lines = dict(line.split("\t", 1) for line in proc.stdout.splitlines() if not line.startswith("note"))
            notes = [line.split("\t", 1)[1] for line in proc.stdout.splitlines() if line.startswith("note\t")]
            assert lines["source"] == "plies"
            assert any("states from the store's /plies" in n for n in notes)
            assert (lines["criteria"] != "none") is shown
            assert any("failure indices not shown" in n for n in notes) is not shown
            assert out.read_bytes().startswith(b"\x89PNG")
            shutil.copy(out, store.parent / f"profile-{case}.png")       # kept for a look
    finally:
        for name in names:
            shutil.move(hidden / name, store.parent / name)


def test_envelope_draws_the_allowables_the_run_used(store, tmp_path):
    """Max stress in σ1–σ2 crosses the σ1 axis at the knocked-down Xt: 1500 MPa (Kaw 2006, Table 2.1) × 0.9 × 0.8
    (the knockdown of the definition) = 1080 MPa, with or without a cell; the run's R used the same allowables."""
    from postproc.plots import trace_envelope
    from shells.criteria import by_name

    from bridge.pictures.plots import _envelope_params
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        cell = int(st.array("hotspots/cell")[0])
        for c in (None, cell):
            groups, held = _envelope_params(st, "cf", c)
            assert "allowables × knockdown 0.72" in held
            for _, p in groups:
                pts = trace_envelope(by_name("max-stress").ratio, p, (0, 1), n=5)
                np.testing.assert_allclose(pts[:4], [[1080, 0], [0, 28.8], [-1080, 0], [0, -177.12]], atol=1e-9)
    out = tmp_path / "env.png"
    proc = run_cli("plot", store, "-o", out, "--kind", "envelope", "--material", "cf", "--cell", cell)
    assert proc.returncode == 0, proc.stderr
    assert "allowables\tallowables × knockdown 0.72, as the run used them in cell" in proc.stdout
    shutil.copy(out, store.parent / "envelope.png")


def test_envelope_of_a_sandwich_cell_leaves_face_criteria_out(store, tmp_path):
    """Wrinkling and dimpling act on a sandwich face's mean stress (common practice), not on one ply's state: a
    ply envelope of them would be a curve of nothing (the review's cell-553 plot ran to 1e34 MPa). They are left
    out of a sandwich cell's envelope with a note, and asking for them alone is refused."""
    out = tmp_path / "env.png"
    proc = run_cli("plot", store, "-o", out, "--kind", "envelope", "--material", "cf", "--cell", 2)   # sandwich
    assert proc.returncode == 0, proc.stderr
    lines = dict(line.split("\t", 1) for line in proc.stdout.splitlines())
    assert lines["criteria"] == "max-stress,max-strain,tsai-wu,hashin,puck,larc03"     # no core or face criteria
    assert lines["note"].startswith("wrinkling, dimpling: checked on a sandwich face's mean stress")
    proc = run_cli("plot", store, "-o", out, "--kind", "envelope", "--material", "cf")
    assert "cell" not in dict(line.split("\t", 1) for line in proc.stdout.splitlines())    # no empty cell line
    refused = run_cli("plot", store, "-o", tmp_path / "x.png", "--kind", "envelope", "--criteria", "wrinkling")
    assert refused.returncode == 2 and "no ply envelope" in refused.stderr and not (tmp_path / "x.png").exists()
