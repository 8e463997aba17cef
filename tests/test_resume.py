"""Interrupted runs leave the previous store intact, and ``--resume`` finishes them."""

from __future__ import annotations

import hashlib
import json
import os
import signal
import subprocess
import sys
import time

import pytest

from bridge.recover.run import run_recover
from bridge.results.partial import partial_paths
from shells.errors import StoreError
from tests.common import ROOT
from tests.corpus.models import resultants, write_model
from tests.test_distributed import assert_same_bits, datasets
from bridge.recover.resultants import write_resultants_h5


@pytest.fixture(scope="module")
def model(tmp_path_factory):
    return write_model(tmp_path_factory.mktemp("resume-model"), nx=40, ny=30)


@pytest.fixture(scope="module")
def clean(model, tmp_path_factory):
    """A clean run's datasets (block size differs from the interrupted runs': results must not care)."""
    out = tmp_path_factory.mktemp("clean") / "clean.h5"
    run_recover(*_args(model), str(out))
    return datasets(out)


def _args(model):
    return str(model["definition"]), str(model["mesh"]), [str(model["resultants"])]


def _sha(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _previous_store(model, out):
    """An earlier, complete store at the output path (other resultants): it must survive interruptions."""
    other = out.parent / "other.h5"
    write_resultants_h5(other, ["case1", "case2", "case3"], resultants(1200, 3, seed=9))
    run_recover(str(model["definition"]), str(model["mesh"]), [str(other)], str(out))
    return _sha(out)


class _Stop(KeyboardInterrupt):
    pass


def _interrupt_after(cells: int):
    def progress(done, total):
        if done >= cells:
            raise _Stop

    return progress


def test_interrupted_then_resumed_equals_a_clean_run(model, clean, tmp_path):
    out = tmp_path / "RESULT.h5"
    before = _previous_store(model, out)
    with pytest.raises(_Stop):
        run_recover(*_args(model), str(out), progress=_interrupt_after(300), block_cells=100)
    assert _sha(out) == before  # the previous store is untouched
    h5, journal, _ = partial_paths(out)
    assert h5.is_file() and [i for i, _ in json.loads(journal.read_text())["done"]] == [0, 1, 2]
    notes = []
    run_recover(*_args(model), str(out), resume=True, note=notes.append)  # options come from the journal
    assert any("3 block(s) already done and verified" in n for n in notes)
    assert_same_bits(datasets(out), clean)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["RESULT.h5", "other.h5"]


def test_resume_refuses_other_inputs(model, tmp_path):
    out = tmp_path / "RESULT.h5"
    with pytest.raises(_Stop):
        run_recover(*_args(model), str(out), progress=_interrupt_after(200), block_cells=100)
    changed = tmp_path / "res.h5"
    write_resultants_h5(changed, ["case1", "case2", "case3"], resultants(1200, 3, seed=1))
    with pytest.raises(StoreError, match=r"resultants0 .*res\.h5.*without --resume"):
        run_recover(str(model["definition"]), str(model["mesh"]), [str(changed)], str(out), block_cells=100,
                    resume=True)
    with pytest.raises(StoreError, match="block_cells 100 -> 50"):
        run_recover(*_args(model), str(out), block_cells=50, resume=True)
    assert not out.exists() and partial_paths(out)[0].is_file()  # refused: the partial work is kept


def test_a_fresh_run_discards_the_unfinished_store(model, clean, tmp_path):
    out = tmp_path / "RESULT.h5"
    with pytest.raises(_Stop):
        run_recover(*_args(model), str(out), progress=_interrupt_after(100), block_cells=100)
    notes = []
    run_recover(*_args(model), str(out), block_cells=100, note=notes.append)
    assert any("discarding" in n for n in notes)
    assert_same_bits(datasets(out), clean)
    assert [p.name for p in tmp_path.iterdir()] == ["RESULT.h5"]


@pytest.mark.parametrize("fraction", [0.1, 0.5, 0.9])
def test_sigkill_mid_run_then_resume(model, clean, tmp_path, fraction):
    """SIGKILL a CLI run at 10, 50 and 90 % of its blocks; --resume (options remembered) completes it, bit for bit."""
    out = tmp_path / "RESULT.h5"
    before = _previous_store(model, out)
    _, journal, _ = partial_paths(out)
    cmd = [sys.executable, "-m", "bridge.cli", "recover", *_args(model)[:2], *_args(model)[2], "-o", str(out),
           "--quiet"]
    env = dict(os.environ)
    proc = subprocess.Popen(cmd + ["--block-cells", "8"], cwd=ROOT, env=env, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE)
    target = int(150 * fraction)  # 1200 cells are 150 blocks
    deadline = time.monotonic() + 120
    try:
        while time.monotonic() < deadline and proc.poll() is None:
            try:
                if len(json.loads(journal.read_text())["done"]) >= target:
                    break
            except (OSError, ValueError, KeyError):
                pass
            time.sleep(0.002)
        assert proc.poll() is None, proc.stderr.read().decode()
        os.kill(proc.pid, signal.SIGKILL)
    finally:
        proc.wait(timeout=30)
        proc.stderr.close()
    assert proc.returncode == -signal.SIGKILL
    assert _sha(out) == before
    done = len(json.loads(journal.read_text())["done"])
    assert target <= done < 150
    res = subprocess.run(cmd + ["--resume"], cwd=ROOT, env=env, capture_output=True, text=True, timeout=300)
    assert res.returncode == 0, res.stderr
    assert "already done and verified" in res.stderr or "damaged" in res.stderr
    assert_same_bits(datasets(out), clean)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["RESULT.h5", "RESULT.h5.hotspots.csv", "other.h5"]
