"""Figures from a results store: through-thickness profiles, polar moduli, failure envelopes.

Check values: the plate of tests/test_render.py (Kaw Table 2.1 graphite/epoxy strengths: Xt 1500, Yt 40 MPa);
invariants where noted.
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.common import assert_one_line_error, run_cli
from tests.test_render import build_store


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    return build_store(tmp_path_factory.getbasetemp())


@pytest.mark.parametrize("args, ext", [((), "png"), (("--cell", "0", "--case", "a"), "svg"),
                                       (("--kind", "polar", "--laminate", "qi"), "svg"),
                                       (("--kind", "envelope", "--criteria", "tsai-wu,max-stress", "--cell", "6"),
                                        "png")])
def test_plot_writes_the_file(store, tmp_path, args, ext):
    out = tmp_path / f"fig.{ext}"
    proc = run_cli("plot", store, "-o", out, *args)
    assert proc.returncode == 0, proc.stderr
    head = out.read_bytes()[:200]
    assert head.startswith(b"\x89PNG") if ext == "png" else b"<svg" in out.read_bytes()


def test_every_route_to_a_profile_gives_the_same_states(store):
    """Invariant: zone-2 cells carry equal resultants and sections, so they have equal states. A hot spot (stored
    in /hotspots), a plain cell (recovered again from the inputs) must agree in both cases (b holds a temperature
    change: the thermal part is held apart on both routes); the failure indices rebuilt from the stored total
    state (/plies, the thermal part split off again as the run split it) must equal them too."""
    from bridge.pictures.plots import _plies_route, _section_of_cell, profile_of
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        hot = set(st.array("hotspots/cell").tolist())
        zone = st.array("model/zone")
        in_zone2 = [c for c in range(12) if zone[c] == 1]
        h = next(c for c in in_zone2 if c in hot)
        plain = next(c for c in in_zone2 if c not in hot)
        for case in ("a", "b"):
            a, _, _, src_a = profile_of(st, h, case)
            b, _, name, src_b = profile_of(st, plain, case)
            assert (src_a, src_b, name) == ("stored", "recovered", case)
            np.testing.assert_allclose(b.stress, a.stress, rtol=1e-9, atol=1e-9)
            np.testing.assert_allclose(b.z, a.z)
            for crit in a.failure_index:
                np.testing.assert_allclose(b.failure_index[crit], a.failure_index[crit], rtol=1e-9)
        for k, case in enumerate(("a", "b")):
            stress, fi, note = _plies_route(st, plain, k, _section_of_cell(st, plain))
            a, _, _, _ = profile_of(st, h, case)
            assert note == ""
            np.testing.assert_allclose(stress, a.stress, rtol=1e-9, atol=1e-9)
            for crit in a.failure_index:
                np.testing.assert_allclose(fi[crit], a.failure_index[crit], rtol=1e-9)
    assert len(b.plies) == 8 and b.labels("mm")[1].startswith("ply 2: 45°")


def test_envelope_meets_the_axes_at_the_strengths():
    """Max stress in σ1–σ2 crosses the axes at Xt, −Xc, Yt, −Yc (Kaw Table 2.1 values of the definition)."""
    from shells.criteria import by_name
    from shells.materials import Orthotropic

    from postproc.plots import trace_envelope

    mat = Orthotropic(name="k", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246,
                      S12=68, thickness=1.0)
    pts = trace_envelope(by_name("max-stress").ratio, mat.params(), (0, 1), n=5)  # t = 0, 90, 180, 270, 360°
    np.testing.assert_allclose(pts[:4], [[1500, 0], [0, 40], [-1500, 0], [0, -246]], atol=1e-9)


def test_a_cell_whose_inputs_are_gone_or_changed_is_refused(tmp_path):
    """A plain cell is recovered again from the run's inputs; a moved or edited input is refused, not used."""
    import shutil

    import h5py

    from tests.test_render import build_store

    store = build_store(tmp_path)          # a private copy: its inputs are changed below
    folder = store.parent
    with h5py.File(store, "a") as h5:
        del h5["plies"]
        plain = next(c for c in range(12) if c not in set(h5["hotspots/cell"][()].tolist()))
    definition = folder / "def.toml"
    definition.write_text(definition.read_text(encoding="utf-8") + "\n# edited\n", encoding="utf-8")
    assert_one_line_error(run_cli("plot", store, "-o", tmp_path / "p.png", "--cell", plain), "has changed")
    shutil.move(definition, tmp_path / "elsewhere.toml")
    assert_one_line_error(run_cli("plot", store, "-o", tmp_path / "p.png", "--cell", plain), "not there")
    assert not (tmp_path / "p.png").exists()
    assert_one_line_error(run_cli("plot", store, "-o", tmp_path / "p.pdf"), ".png or .svg")


def test_an_envelope_with_no_curve_is_an_error(store, tmp_path):
    """A core material in the σ1–σ2 plane gives no envelope: an error that says why, not an empty picture."""
    out = tmp_path / "e.png"
    assert_one_line_error(run_cli("plot", store, "-o", out, "--kind", "envelope", "--criteria", "core-shear"),
                          "no", "envelope")
    assert not out.exists()


def _synthetic_profile(fos: float, shear: float):
    """Two 0.125 mm plies under σ1 = 300 MPa (an invented state) with τ13, τ23 = ±``shear``."""
    from postproc.profile import Profile
    from postproc.run_meta import PlyInfo

    stress = np.zeros((2, 3, 5))
    stress[..., 0] = 300.0
    stress[..., 3] = shear * np.array([1.0, -1.0, 1.0])
    stress[..., 4] = -shear
    zi = np.array([-0.125, 0.0, 0.125])
    z = np.column_stack([zi[:-1], 0.5 * (zi[:-1] + zi[1:]), zi[1:]])
    fi = {"max-stress": np.full((2, 3), 0.2)}
    return Profile(z, stress, fi, zi, [PlyInfo("m", 0.0, 0.125)] * 2, ("ply", "ply"), fos, ("a note",))


def test_profile_marks_margin_zero_at_one_over_fos_and_failure_at_one():
    """Margin = R/FoS − 1 is zero at 1/R = 1/FoS (0.667 for FoS 1.5, 14 CFR 25.303 on limit loads); failure
    (R = 1) stays at 1/R = 1; an ultimate case (FoS 1) gets the failure line only."""
    from postproc.profile import profile_figure

    for fos, lines in ((1.5, {"failure: R = 1": 1.0, "margin 0: R = FoS 1.5": 1 / 1.5}),
                       (1.0, {"failure: R = 1": 1.0})):
        fig = profile_figure(_synthetic_profile(fos, 0.0), title="t", stress_unit="MPa", length_unit="mm")
        found = {l.get_label(): float(l.get_xdata()[0]) for l in fig.axes[-1].get_lines()
                 if l.get_label() in ("failure: R = 1", "margin 0: R = FoS 1.5")}
        assert found == pytest.approx(lines)
        assert any("a note" in t.get_text() for t in fig.findobj(lambda a: hasattr(a, "get_text")))


def test_profile_draws_roundoff_as_zero():
    """τ13, τ23 of ±6e-17 MPa next to σ1 = 300 MPa are round-off (below 1e-12 of the largest stress,
    shells.recovery_tables.ROUNDOFF): drawn as zero on a fixed axis, not autoscaled into a distribution."""
    from postproc.profile import profile_figure

    fig = profile_figure(_synthetic_profile(1.0, 6e-17), title="t", stress_unit="MPa", length_unit="mm")
    panel = fig.axes[2]
    values = np.concatenate([np.asarray(l.get_xdata(), float) for l in panel.get_lines()
                             if l.get_label() in ("τ13", "τ23")])
    assert np.nan_to_num(values).tolist() == [0.0] * values.size
    assert panel.get_xlim() == (-1.0, 1.0)
    real = profile_figure(_synthetic_profile(1.0, 2.0), title="t", stress_unit="MPa", length_unit="mm")
    assert real.axes[2].get_xlim() != (-1.0, 1.0)


def test_a_dollar_in_a_name_is_drawn_as_a_dollar():
    """Labels are drawn as written: a $ is a dollar sign, with no mathematics and no backslash shown."""
    import io

    import matplotlib

    from postproc.plots import envelope_figure, polar_figure, save_figure

    name = "zone $x^2$ of s$k$in"
    a = np.linspace(0, 360, 5)
    figs = [polar_figure(a, a + 1, a + 2, title=name, unit="$/in"),
            envelope_figure({name: [np.array([[1.0, 0], [0, 1], [-1, 0], [0, -1], [1, 0]])] * 2}, None, title=name,
                            unit="$/in", states_label=name)]
    for fig in figs:
        buf = io.BytesIO()
        with matplotlib.rc_context({"svg.fonttype": "none"}):
            save_figure(fig, buf, "svg")
        texts = [t.get_text() for t in fig.findobj(matplotlib.text.Text)]
        assert any(name in t for t in texts) and not any("\\$" in t for t in texts)
        svg = buf.getvalue().decode("utf-8")
        assert "zone $x^2$ of s$k$in" in svg and "\\$" not in svg


def test_a_dollar_in_a_map_label_is_drawn_as_a_dollar(monkeypatch):
    """Map pictures (title, colour-bar title, legend, mark label) draw a $ literally too."""
    pytest.importorskip("pyvista")
    import matplotlib.text

    from postproc.render import render_field
    from tests.meshes import flat_plate

    drawn = []
    original = matplotlib.text.Text.draw

    def record(self, renderer):
        drawn.append((self.get_text(), self.get_parse_math()))
        return original(self, renderer)

    monkeypatch.setattr(matplotlib.text.Text, "draw", record)
    mesh = flat_plate(4, 3)
    render_field(mesh.points, mesh.blocks, np.arange(mesh.n_cells) % 2, kind="categorical",
                 labels=["zone $x^2$", "s$k$in"], title="zone $x^2$ of s$k$in", bar_title="margin $a$", mark=3,
                 mark_label="cell $3$")
    with_dollar = [(t, math) for t, math in drawn if "$" in t]
    assert {"zone $x^2$ of s$k$in"} <= {t for t, _ in with_dollar}
    assert with_dollar and not any(math for _, math in with_dollar)
