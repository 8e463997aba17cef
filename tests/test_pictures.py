"""Map pictures of a slender, dense model checked on their pixels: the spar-box scenario (tests/sparbox.py).

Check values are properties of the pictures themselves (the layout rules of docs/pictures.md): the model's pixels
come from the views' depth buffers, independent of everything drawn over them.
"""

from __future__ import annotations

import numpy as np
import pytest

from tests.sparbox import spar_store


@pytest.fixture(scope="module")
def spar(tmp_path_factory):
    return spar_store(tmp_path_factory.getbasetemp())


def _draw(spar, **kw):
    from bridge.pictures.render import draw_store_field
    from bridge.results.store import StoreReader

    with StoreReader(spar) as st:
        return draw_store_field(st, **kw)


def _drawn_outside_views(pic) -> np.ndarray:
    """Pixels that are not white and lie in the title, colour bar or legend boxes."""
    mask = np.zeros(pic.model_mask.shape, dtype=bool)
    for name, box in pic.regions.items():
        if not name.startswith("view"):
            mask[box.slices] = True
    return mask & (pic.image < 250).any(axis=2)


@pytest.mark.parametrize("field", ["margin", "critical-ply"])
def test_a_slender_model_fills_the_picture_and_nothing_covers_it(spar, field):
    f, pic = _draw(spar, field=field)
    assert pic.model_mask.mean() >= 0.30, pic.model_mask.mean()          # 12:1 model, iso view, default size
    assert not (_drawn_outside_views(pic) & pic.model_mask).any()          # no legend/bar/title pixel on the model
    boxes = [b for n, b in pic.regions.items() if not n.startswith("view")]
    for name, box in pic.regions.items():
        if name.startswith("view"):
            assert not pic.model_mask[box.slices].all(), "the model touches no border: a margin is kept"
            for other in boxes:
                rows = set(range(box.top, box.top + box.height)) & set(range(other.top, other.top + other.height))
                cols = set(range(box.left, box.left + box.width)) & set(range(other.left, other.left + other.width))
                assert not (rows and cols), (name, box, other)
    assert not pic.views[0].edges                                          # 30k cells: no edges at this size


def test_every_named_view_shows_the_model_or_is_refused(spar, tmp_path):
    """Every view shows the model; seen along the span (side) the open tube is edge-on: refused, not blank."""
    from postproc.render import VIEWS
    from tests.common import assert_one_line_error, run_cli

    views = tuple(v for v in VIEWS if v != "side")
    f, pic = _draw(spar, views=views, size=(1000, 1800))
    for info in pic.views:
        covered = pic.model_mask[info.box.slices].mean()
        assert covered > 0.05, (info.name, covered)
    out = tmp_path / "side.png"
    assert_one_line_error(run_cli("render", spar, "-o", out, "--view", "side"), "view 'side'", "edge-on")
    assert not out.exists()


def test_the_worst_view_zooms_on_the_worst_cell(spar):
    from bridge.results.store import StoreReader

    with StoreReader(spar) as st:
        worst = st.run.summary.worst.cell
    f, pic = _draw(spar, views=("worst",))
    info = pic.views[0]
    assert info.name == "worst" and info.mark_visible and info.edges    # cells large enough for edges
    px = pic.cell_pixels
    near = np.flatnonzero((px[:, 0] >= 0))
    assert worst in near and near.size < 0.2 * len(px)                    # a neighbourhood, not the model
    row, col = px[worst]
    box = info.box
    assert box.top <= row < box.top + box.height and box.left <= col < box.left + box.width


def test_the_worst_cell_is_ringed_where_visible_and_noted_where_hidden(spar):
    """The spar's worst cell is on the bottom cap: hidden from iso, visible from below."""
    from postproc.colors import MARK, hex_to_rgb

    from postproc.colors import cell_rgb

    f, pic = _draw(spar, views=("bottom", "iso", "front"))
    bottom, iso, front = pic.views
    assert bottom.mark_visible is True and iso.mark_visible is False and front.mark_visible is False  # edge-on
    ring = np.all(np.abs(pic.image.astype(int) - 255 * hex_to_rgb(MARK)) < 40, axis=2)
    assert ring[bottom.box.slices].any() and not ring[iso.box.slices].any() and not ring[front.box.slices].any()
    # The bottom view shows that cell, in its own colour (seen square-on under the headlight).
    row, col = pic.cell_pixels[f.mark]
    want = cell_rgb("diverging", f.values[[f.mark]], pic.limits)[0]
    np.testing.assert_allclose(pic.image[row, col], want, atol=12)


def test_a_long_categorical_legend_names_angle_material_and_zone(spar):
    f, pic = _draw(spar, field="critical-ply")
    labels = [label for label, _ in pic.legend]
    assert any(label.startswith("ply 9: 90° carbon-ud, cap-34 (cap-root)") for label in labels), labels
    assert any(label.endswith("glass-ud, web-sandwich (webs)") for label in labels), labels


def test_colour_bar_ticks_include_zero_the_ends_and_the_cap():
    from postproc.legend import ColourBar

    bar = ColourBar("diverging", (-0.107, 2.0), "MS [-]", cap=2.0)
    ticks = bar.ticks()
    assert 0.0 in ticks and 2.0 in ticks and -0.107 in ticks
    assert bar.tick_label(2.0) == "≥ 2" and bar.tick_label(-0.107) == "−0.107"
    positions = sorted(bar.position(t) for t in ticks)
    assert min(np.diff(positions)) >= 0.08 - 1e-12                         # none crowded along the bar


def test_a_picture_too_small_for_its_views_is_an_error(spar, tmp_path):
    from tests.common import assert_one_line_error, run_cli

    out = tmp_path / "m.png"
    assert_one_line_error(run_cli("render", spar, "-o", out, "--view", "iso", "--view", "top", "--size", "40x40"),
                          "larger --size")
    assert not out.exists()


def test_categorical_colours_stay_apart():
    """Any first n colours of the palette are far apart in OKLab (Euclidean distance, the perceptual difference;
    about 0.02 is just noticeable, common practice), and from the worst-cell mark and the no-value grey: the
    review found ΔE 12–14 pairs within one zone (plies 3 and 9 of a 5-entry group). Conversion checked on sRGB
    red, OKLab (0.62796, 0.22486, 0.12585) (Ottosson, "A perceptual color space for image processing", 2020;
    from memory)."""
    from postproc import colors

    np.testing.assert_allclose(colors.to_oklab(["#ff0000", "#ffffff"]),
                               [[0.62796, 0.22486, 0.12585], [1.0, 0.0, 0.0]], atol=2e-4)
    for n, least in ((5, 0.2), (12, 0.15), (33, 0.1)):
        pal = colors.palette(n)
        lab = colors.to_oklab(pal + [colors.MARK, colors.NO_VALUE])
        d = np.linalg.norm(lab[:, None] - lab[None], axis=-1)
        np.fill_diagonal(d, np.inf)
        assert d[:n].min() >= least, (n, d[:n].min())
        assert pal == colors.palette(n + 5)[:n]          # one sequence: a category keeps its colour as n grows


def test_an_untitled_group_is_never_shown_as_a_continuation():
    """The review's demo legend put "ringed: the worst cell" under "lid-sandwich (lid) (continued)": a group cut by
    a column break repeats its heading, but the untitled tail (no value, the mark) belongs to no group."""
    from postproc.layout import columns
    from postproc.legend import Legend

    plies = tuple((f"ply {k}", "#000000") for k in range(1, 6))
    legend = Legend((("floor", plies), ("lid", plies), ("", (("ringed: the worst cell (553)", "#ff2fa0"),))))
    for rows in range(3, 14):
        shown = columns(legend.lines(), 4, rows)
        for col in shown:
            texts = [t for t, _, _ in col]
            if "ringed: the worst cell (553)" in texts:
                above = [t for t, _, head in col[:texts.index("ringed: the worst cell (553)")] if head]
                assert not above or above[-1] == "", (rows, col)
            assert col[0][0] != "" or not col[0][2], (rows, col)      # no column opens with a blank line
    # Grouped plies still continue under their heading.
    assert columns(legend.lines(), 2, 4)[1][0] == ("floor (continued)", None, True)
