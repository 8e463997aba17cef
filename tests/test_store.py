"""The results store's typed contract: run metadata round trip, stored section tables, layout versions.

Check values are invariants: what recover wrote must read back equal (metadata, the kernels' tables), and a
store of another layout is refused with one line naming the fix.
"""

from __future__ import annotations

import shutil

import h5py
import numpy as np
import pytest

from tests.common import assert_one_line_error, run_cli
from tests.test_render import build_store


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    return build_store(tmp_path_factory.getbasetemp())


def test_run_metadata_round_trips_through_json(store):
    from postproc.run_meta import meta_from_json, meta_to_json

    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        meta = st.run
    assert meta_from_json(meta_to_json(meta)) == meta
    assert meta.units == "N-mm" and meta.label("stress") == "MPa" and meta.label("temperature") == "°C"
    assert [c.name for c in meta.cases] == ["a", "b"] and meta.cases[1].delta_T == -100.0
    assert meta.sections[1].layup == "[0/45/-45/90]s" and len(meta.sections[1].plies) == 8
    assert meta.summary.worst is not None and meta.summary.worst.cell in [h.cell for h in meta.summary.hot_spots]
    assert meta.criteria[0].name == "max-stress" and "qualified engineer" in meta.caution


def test_stored_tables_are_the_tables_the_run_used(store):
    """The ply property table and z-table in /sections equal the model's own (nothing rebuilt from JSON)."""
    from bridge.definition.loader import load_definition
    from bridge.mesh.formats import read_mesh
    from bridge.model.build import build_model
    from bridge.results.store import StoreReader

    folder = store.parent
    model = build_model(load_definition(folder / "def.toml"), read_mesh(folder / "plate.vtu"))
    want = model.tables()
    with StoreReader(store) as st:
        got = st.tables()
        A = st.section_matrix("A", 1)
    for name in want.arrays._fields:
        np.testing.assert_array_equal(getattr(got, name), getattr(want, name), err_msg=name)
    np.testing.assert_array_equal(A, model.sections[1].props.A)


def test_a_store_of_an_older_layout_is_refused(store, tmp_path):
    old = tmp_path / "old.h5"
    shutil.copy(store, old)
    with h5py.File(old, "a") as h5:
        h5.attrs["layout_version"] = 1
    assert_one_line_error(run_cli("render", old, "-o", tmp_path / "m.png"), "layout 1", "run plybridge recover again")
    assert not (tmp_path / "m.png").exists()


def test_unknown_metadata_keys_are_ignored_and_missing_defaults_filled():
    """Extending the contract: a field with a default reads back from documents written without it."""
    import json

    from postproc.run_meta import CaseInfo, build

    assert build(CaseInfo, {"name": "x", "later_field": 1}) == CaseInfo("x")
    with pytest.raises(ValueError, match="name"):
        build(CaseInfo, json.loads('{"kind": "limit"}'))
