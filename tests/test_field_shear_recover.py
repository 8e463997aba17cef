"""`plybridge recover` with `[analysis] transverse_shear = "field"` on Pagano's plate, through `--store plies`.

Source: N. J. Pagano, J. Composite Materials 4 (1970) 20–34, [0/90/90/0], S = 100, thin limit of the mid-plane
transverse shear τ̄xz(0, a/2) = 0.339 and τ̄yz(a/2, 0) = 0.138 (from memory, re-derived by integrating the full
equilibrium over the classical Navier solution); the Q-only method gives τ̄yz about 12 % high (Rolfes & Rohwer,
Int. J. Numer. Meth. Engng 40 (1997) 51–60, re-derived). The resultant field is the classical Navier solution
at the centroids of a 40 × 40 quad mesh (shells.navier, written independently of the recovery).
"""

from __future__ import annotations

import json

import h5py
import pytest

from bridge.results.store import StoreReader
from bridge.recover.pagano_check import PAGANO_DEFINITION, pagano_inputs, plate_shear
from tests.common import run_cli


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("pagano")
    out = {}
    for method in ("field", "equilibrium"):
        d = tmp / method
        d.mkdir()
        mesh, defn, res = pagano_inputs(d, method)
        proc = run_cli("recover", defn, mesh, res, "-o", d / "out.h5", "--store", "plies", "--json")
        assert proc.returncode == 0, proc.stderr
        with h5py.File(d / "out.h5") as h5:
            out[method] = (json.loads(proc.stdout), proc.stderr, h5["plies/transverse_shear"][0])
        with StoreReader(d / "out.h5") as st:
            out[method + "-meta"] = st.run
    out["mesh"] = mesh
    return out


def test_field_method_meets_the_thin_limit(runs):
    summary, stderr, shear = runs["field"]
    txz, tyz = plate_shear(shear)
    assert txz == pytest.approx(0.339, rel=2e-2)
    assert tyz == pytest.approx(0.138, rel=2e-2)
    zone = summary["transverse_shear"]["zones"]["plate"]
    assert zone["mean"] < 5e-3 and zone["max"] < 1e-2 and zone["fallback_cells"] == 0
    assert "transverse shear from the moment field" in stderr
    check = runs["field-meta"].summary.shear_check
    assert [c.zone for c in check] == ["plate"] and check[0].max < 1e-2
    assert runs["field-meta"].analysis.transverse_shear == "field"


def test_q_only_method_is_high_in_tau_yz(runs):
    _, _, shear = runs["equilibrium"]
    txz, tyz = plate_shear(shear)
    assert txz == pytest.approx(0.339, rel=2e-2)
    assert tyz / 0.138 == pytest.approx(1.12, abs=0.015)
    assert "transverse_shear" not in runs["equilibrium"][0]


def test_definition_names_the_method():
    assert 'transverse_shear = "{method}"' in PAGANO_DEFINITION
