"""The report's section beyond the first-ply envelope, the environment of each case, and the map fields of the
progressive analysis and of the misalignment.

Check values: the first- and last-ply factors of the [0/90]s cross-ply of Kaw's ply (Kaw, *Mechanics of
Composite Materials*, 2nd ed., 2006, Table 2.1) in closed form (tests/test_progressive.py, cross_ply_factors),
and the store's own arrays for what the report and maps must repeat.
"""

from __future__ import annotations

import numpy as np
import pytest

from bridge.pictures.fields import FieldError, select_field
from bridge.pictures.report import failure_sequences
from bridge.results.store import StoreReader
from postproc.numbers import sig
from postproc.report_beyond import beyond_section
from postproc.report_inputs import inputs_section, settings_section
from tests.common import kaw_definition, recover_once, zone_cases
from tests.meshes import flat_plate
from tests.test_progressive import cross_ply_factors

CROSS = (kaw_definition("[0/90]s", "cp", material="knockdown = { environment = { hot-wet = 0.80, cold-dry = 0.95 } }\n")
         + "factor_of_safety = { limit = 1.5, ultimate = 1.0, burst = 2.25 }\n"
         + zone_cases("cp", {"ops": {"step": 1, "environment": "cold-dry"},
                             "burst": {"step": 2, "kind": "burst", "environment": "hot-wet"}}))
NX = 100.0
#: Knockdowns of the cases (on the allowables, so on the factors too: no thermal part here): cold-dry, hot-wet.
K_OPS, K_BURST = 0.95, 0.80


def _loads(n_cells: int) -> np.ndarray:
    """Case ops: Nx = 100 N/mm in every cell; case burst: Nx growing along the cells (200 … 400 N/mm)."""
    R = np.zeros((2, n_cells, 8))
    R[0, :, 0] = NX
    R[1, :, 0] = np.linspace(200.0, 400.0, n_cells)
    return R


@pytest.fixture(scope="module")
def progressive_store(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("progressive")
    mesh = flat_plate(4, 2)
    _, out = recover_once(tmp, CROSS + "[analysis.progressive]\n", _loads(mesh.n_cells), mesh)
    return out


def test_progressive_section_repeats_the_closed_form(progressive_store):
    fpf, lpf = cross_ply_factors()
    with StoreReader(progressive_store) as st:
        html = beyond_section(st.run, failure_sequences(st))
        seqs = failure_sequences(st)
        first, last = select_field(st, "first-ply-factor"), select_field(st, "last-ply-factor")
        ops = select_field(st, "first-ply-factor", case="ops")
        stored = st.array("cells/first_ply_factor")
    # Case ops (Nx = 100) everywhere, burst 200 … 400: the lowest factors are burst's at its 400 N/mm cell. The
    # allowables are knocked down by the case's environment, so are the factors.
    fpf_b, lpf_b = K_BURST * fpf / 400.0, K_BURST * lpf / 400.0
    np.testing.assert_allclose(ops.values, K_OPS * fpf / NX, rtol=1e-12)
    np.testing.assert_allclose(first.values, np.minimum(K_OPS * fpf / NX, stored[:, 1]), rtol=1e-12)
    np.testing.assert_allclose(first.values.min(), fpf_b, rtol=1e-12)
    np.testing.assert_allclose(last.values.min(), lpf_b, rtol=1e-12)
    assert f"{sig(fpf_b)}" in html and f"{sig(lpf_b)}" in html
    assert f"{sig(lpf / fpf)} … {sig(lpf / fpf)}" in html                 # last/first is the laminate's own
    # The sequence of the worst hot spot: both 90° plies (2, 3) in their matrix, then both 0° plies (1, 4) in their
    # fibres, at the closed-form factors of its case.
    q = seqs[0]
    assert q.case == "burst" and q.first == pytest.approx(fpf_b) and q.last == pytest.approx(lpf_b)
    assert [(e.ply[:6], e.discount) for e in q.events] == [("2: 90°", "matrix"), ("3: 90°", "matrix"),
                                                            ("1: 0° ", "fibre"), ("4: 0° ", "fibre")]
    np.testing.assert_allclose([e.factor for e in q.events], [fpf_b] * 2 + [lpf_b] * 2, rtol=1e-12)
    assert "Failure sequence of the hot spots" in html and "Misalignment" not in html


def test_environment_of_each_case_in_the_inputs(progressive_store):
    with StoreReader(progressive_store) as st:
        html = inputs_section(st.run) + settings_section(st.run)
    assert "cold-dry: cf 0.95" in html and "hot-wet: cf 0.8" in html
    assert "factor of safety, burst cases [-]" in html and "ply discount" in html


def test_a_factor_map_caps_the_never_failing_cells(tmp_path):
    # A shear-free [0/90]s under Nx = 0 in half the cells: no ply ever fails there (factor ∞), drawn at the cap.
    mesh = flat_plate(4, 1)
    R = np.zeros((1, mesh.n_cells, 8))
    R[0, :2, 0] = NX
    defn = CROSS.split("[cases.ops]")[0] + "[cases.ops]\nstep = 1\n[analysis.progressive]\n"
    _, out = recover_once(tmp_path, defn, R, mesh, names=["s1"])
    from bridge.pictures.fields_beyond import FACTOR_CAP

    with StoreReader(out) as st:
        f = select_field(st, "first-ply-factor")
        assert np.isinf(st.array("cells/first_ply_factor")[2:]).all()
        with pytest.raises(FieldError, match="misalignment"):
            select_field(st, "misalignment")
        with pytest.raises(FieldError, match="per-cell"):
            select_field(st, "first-ply-factor", ply=1)
    assert f.cap == FACTOR_CAP and (f.values[2:] == FACTOR_CAP).all() and "2 cells never fail" in f.title
    # A case naming no environment takes the lowest factor of the table (hot-wet, 0.80).
    np.testing.assert_allclose(f.values[:2], K_BURST * cross_ply_factors()[0] / NX, rtol=1e-12)


def test_misalignment_and_restricted_envelope_sections(tmp_path):
    defn = CROSS.replace("[[zones]]", """misalignment = "3 deg"
[analysis.envelopes.fibre-only]
criteria = ["max-stress"]
modes = ["fibre"]
kinds = ["burst"]
description = "burst: fibre failure only"
[[zones]]""")
    mesh = flat_plate(4, 2)
    _, out = recover_once(tmp_path, defn, _loads(mesh.n_cells), mesh)
    with StoreReader(out) as st:
        html = beyond_section(st.run) + settings_section(st.run)
        turn = st.array("cells/misalignment")
        env = st.array("envelopes/fibre-only/min_margin")
        full = st.array("cells/min_margin")
        field = select_field(st, "misalignment")
    turned = int(np.count_nonzero(np.isfinite(turn) & (turn != 0)))
    assert "turned by −3° and +3°" in html and f"governs in {turned} cells" in html and "±3°" in html
    assert turned == field.values[np.isfinite(field.values) & (field.values != 1)].size
    assert field.labels == ("turned −3°", "nominal", "turned 3°")
    # The restricted envelope's minimum beside the full one, as stored.
    assert sig(env.min()) in html and sig(full.min()) in html and "burst: fibre failure only" in html
    assert env.min() >= full.min()
