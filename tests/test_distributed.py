"""Distributed recovery (dask.distributed) gives the serial run's store bit for bit."""

from __future__ import annotations

import h5py
import numpy as np
import pytest

from bridge.recover.distributed import WORKER_ENV, check_workers
from bridge.recover.run import run_recover
from bridge.recover.resultants import write_resultants_xdmf
from shells.errors import InputError
from tests.corpus.models import resultants, write_model
from tests.meshes import flat_plate

BLOCK = 64  # 600 cells: ten blocks, the last one short


@pytest.fixture(scope="session")
def client():
    """One local cluster for the session: 2 worker processes, 1 thread each, dashboard off, loopback."""
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None, env=dict(WORKER_ENV), silence_logs=40) as cluster, \
            distributed.Client(cluster) as c:
        yield c


@pytest.fixture(scope="module")
def model(tmp_path_factory):
    return write_model(tmp_path_factory.mktemp("dist-model"))


def datasets(path) -> dict[str, np.ndarray]:
    """Every dataset under /envelope and /cells of a store."""
    with h5py.File(path, "r") as h5:
        return {f"{g}/{k}": h5[g][k][()] for g in ("envelope", "cells", "hotspots") for k in h5[g]}


def assert_same_bits(a: dict, b: dict) -> None:
    assert a.keys() == b.keys()
    for key in a:
        x, y = a[key], b[key]
        assert x.dtype == y.dtype and x.shape == y.shape, key
        if x.dtype.kind == "f":  # compare bits, NaN included
            assert np.array_equal(x.view(np.uint64), y.view(np.uint64)), key
        else:
            assert np.array_equal(x, y), key


def _run(model, out, **kw):
    return run_recover(str(model["definition"]), str(model["mesh"]), [str(model["resultants"])], str(out),
                       block_cells=BLOCK, **kw)


def test_distributed_equals_serial_bit_for_bit(model, client, tmp_path):
    serial = _run(model, tmp_path / "serial.h5")
    dist = _run(model, tmp_path / "dist.h5", client=client)
    assert dist == serial
    assert_same_bits(datasets(tmp_path / "serial.h5"), datasets(tmp_path / "dist.h5"))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["dist.h5", "serial.h5"]  # no partial or lock left


def test_distributed_with_plies_and_in_memory_resultants(tmp_path, client):
    """Resultants that tasks cannot open by path (XDMF) travel with the blocks; ply states too."""
    paths = write_model(tmp_path / "m", nx=10, ny=6)
    mesh = flat_plate(10, 6)
    write_resultants_xdmf(tmp_path / "res.xdmf", mesh, ["a", "b"], resultants(mesh.n_cells, 2, seed=3))
    args = (str(paths["definition"]), str(paths["mesh"]), [str(tmp_path / "res.xdmf")])
    run_recover(*args, str(tmp_path / "s.h5"), True, block_cells=16)
    run_recover(*args, str(tmp_path / "d.h5"), True, block_cells=16, client=client)
    with h5py.File(tmp_path / "s.h5", "r") as s, h5py.File(tmp_path / "d.h5", "r") as d:
        for key in ("plies/stress", "plies/strain", "envelope/margin", "cells/case_margin"):
            assert np.array_equal(s[key][()], d[key][()], equal_nan=True), key


def test_block_size_does_not_change_results(model, tmp_path):
    """Blocks are an implementation detail: any block size gives the same arrays."""
    _run(model, tmp_path / "a.h5")
    run_recover(str(model["definition"]), str(model["mesh"]), [str(model["resultants"])], str(tmp_path / "b.h5"),
                block_cells=7)
    assert_same_bits(datasets(tmp_path / "a.h5"), datasets(tmp_path / "b.h5"))


@pytest.mark.parametrize("workers, scheduler, needle", [(0, None, "--workers"), (2, "tcp://127.0.0.1:9", "exclude"),
                                                        (None, "  ", "--scheduler")])
def test_bad_distribution_options(workers, scheduler, needle):
    with pytest.raises(InputError, match=needle):
        check_workers(workers, scheduler)


def test_unreachable_scheduler_is_one_clear_error(model, tmp_path):
    pytest.importorskip("distributed")
    import dask

    with dask.config.set({"distributed.comm.timeouts.connect": "2s"}):
        with pytest.raises(InputError, match="cannot reach the scheduler"):
            _run(model, tmp_path / "x.h5", scheduler="tcp://127.0.0.1:9")
    assert list(tmp_path.iterdir()) == []


def test_compare_on_workers_equals_serial(tmp_path, client):
    """compare streams its blocks through the same runners: dask workers give the serial comparison."""
    from bridge.compare.run import run_compare
    from bridge.compare.solver_plies import solver_arrays
    from bridge.definition.loader import load_definition
    from bridge.mesh.formats import read_mesh, vtu
    from bridge.model.build import build_model
    from postproc.compare import reference_values
    from tests.corpus.models import DEFINITION

    paths = write_model(tmp_path, nx=12, ny=10,
                        definition=DEFINITION + '\n[solver_plies]\npattern = "p{ply}_{point}"\n')
    defn = load_definition(paths["definition"])
    model = build_model(defn, read_mesh(paths["mesh"]))
    R = resultants(model.n_cells)
    ours = reference_values(model.tables(), model.section, model.phi, R, np.zeros((3, model.n_cells)), None, None,
                            "stress")
    ours[1] *= 1 + 1e-4 * np.random.default_rng(1).standard_normal(ours[1].shape)   # a small, real discrepancy
    arrays = {f"{k}@case{j + 1}": v for j in range(3) for k, v in solver_arrays(ours[j], defn.solver_plies,
                                                                                  model).items()}
    vtu.write(tmp_path / "plies.vtu", model.mesh, arrays)
    args = (str(paths["definition"]), str(paths["mesh"]), [str(paths["resultants"])], [str(tmp_path / "plies.vtu")])
    serial = run_compare(*args, str(tmp_path / "s.h5"), block_cells=BLOCK)
    dist = run_compare(*args, str(tmp_path / "d.h5"), block_cells=BLOCK, client=client)
    assert serial == dist and serial["compared_values"] > 0 and serial["max_discrepancy"] > 0
    with h5py.File(tmp_path / "s.h5", "r") as a, h5py.File(tmp_path / "d.h5", "r") as b:
        assert np.array_equal(a["cells/discrepancy"][()], b["cells/discrepancy"][()], equal_nan=True)
