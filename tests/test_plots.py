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


def test_profile_from_plies_matches_the_hot_spot_route(store):
    """Invariant: zone-2 cells carry equal resultants and sections, so they have equal states; in case a
    (ΔT = 0) nothing is held fixed, so the failure index of the stored total state (the /plies route) must equal
    the hot-spot 1/R."""
    from bridge.pictures.plots import profile_of
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        hot = set(st.array("hotspots/cell").tolist())
        zone = st.array("model/zone")
        in_zone2 = [c for c in range(12) if zone[c] == 1]
        h = next(c for c in in_zone2 if c in hot)
        plain = next(c for c in in_zone2 if c not in hot)
        a, _, _ = profile_of(st, h, "a")
        b, _, case = profile_of(st, plain, "a")
    assert case == "a" and len(b.ply_labels) == 8 and b.ply_labels[1].startswith("ply 2: 45°")
    np.testing.assert_allclose(b.stress, a.stress, rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(b.z, a.z)
    for name in a.failure_index:
        np.testing.assert_allclose(b.failure_index[name], a.failure_index[name], rtol=1e-9)


def test_envelope_meets_the_axes_at_the_strengths():
    """Max stress in σ1–σ2 crosses the axes at Xt, −Xc, Yt, −Yc (Kaw Table 2.1 values of the definition)."""
    from shells.criteria import by_name
    from shells.materials import Orthotropic

    from postproc.plots import trace_envelope

    mat = Orthotropic(name="k", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246,
                      S12=68, thickness=1.0)
    pts = trace_envelope(by_name("max-stress").ratio, mat.params(), (0, 1), n=5)  # t = 0, 90, 180, 270, 360°
    np.testing.assert_allclose(pts[:4], [[1500, 0], [0, 40], [-1500, 0], [0, -246]], atol=1e-9)


def test_profile_needs_plies_for_a_cell_that_is_not_a_hot_spot(store, tmp_path):
    import shutil

    import h5py

    from bridge.results.store import StoreReader

    env = tmp_path / "env.h5"
    shutil.copy(store, env)
    with h5py.File(env, "a") as h5:
        del h5["plies"]
    with StoreReader(store) as st:
        plain = next(c for c in range(12) if c not in set(st.array("hotspots/cell").tolist()))
    assert_one_line_error(run_cli("plot", env, "-o", tmp_path / "p.png", "--cell", plain), "--store plies")
    assert_one_line_error(run_cli("plot", store, "-o", tmp_path / "p.pdf"), ".png or .svg")
