"""Faults: a full disk, a read-only file system, a tampered journal, an altered store.

The disk tests mount a small tmpfs, which needs root and a kernel that lets the container mount (CI runs as
root); elsewhere they are skipped with the reason. Every faulty run must end with one line on stderr and
exit code 2, leave no partial, temporary or lock file, and keep the previous output byte for byte.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import h5py
import numpy as np
import pytest

from bridge.recover.run import run_recover
from bridge.results.complete import block_arrays, digest, verify_blocks
from bridge.results.partial import partial_paths
from tests.common import ROOT, assert_one_line_error, run_cli
from tests.corpus.models import write_model
from tests.test_distributed import assert_same_bits, datasets


@pytest.fixture(scope="module")
def model(tmp_path_factory):
    folder = tmp_path_factory.mktemp("faults-model")
    paths = write_model(folder, nx=100, ny=60, n_cases=4)  # 6000 cells
    paths["store"] = folder / "store.h5"
    run_recover(str(paths["definition"]), str(paths["mesh"]), [str(paths["resultants"])], str(paths["store"]))
    return paths


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _listing(folder: Path) -> dict[str, str]:
    return {p.name: _sha(p) for p in sorted(folder.iterdir())}


# ----------------------------------------------------------------------------- a small tmpfs

def _mount(folder: Path, size: str) -> str | None:
    """Mount a tmpfs at ``folder``; the reason it cannot be done, or None."""
    if os.geteuid() != 0:
        return "needs root to mount a tmpfs (CI runs as root)"
    if shutil.which("mount") is None:
        return "no mount command"
    res = subprocess.run(["mount", "-t", "tmpfs", "-o", f"size={size}", "tmpfs", str(folder)], capture_output=True,
                         text=True)
    return None if res.returncode == 0 else f"cannot mount a tmpfs here ({res.stderr.strip() or res.returncode})"


@contextlib.contextmanager
def tmpfs(size: str = "3m"):
    folder = Path(tempfile.mkdtemp(prefix="plybridge-tmpfs-"))
    reason = _mount(folder, size)
    if reason:
        folder.rmdir()
        pytest.skip(reason)
    try:
        yield folder
    finally:
        subprocess.run(["umount", "-l", str(folder)], check=False)
        folder.rmdir()


def _remount(folder: Path, mode: str) -> None:
    subprocess.run(["mount", "-o", f"remount,{mode}", str(folder)], check=True)


def _fill(folder: Path, leave: int = 0) -> None:
    """Fill the file system of ``folder`` up to ``leave`` bytes free."""
    st = os.statvfs(folder)
    free = st.f_bavail * st.f_frsize - leave
    with open(folder / "filler", "wb") as fh:
        with contextlib.suppress(OSError):
            fh.write(b"\0" * max(free, 0))


def _recover(model, out: Path, *extra: str, bypass_space_check: bool = False) -> subprocess.CompletedProcess:
    """plybridge recover in a fresh interpreter; optionally with the free-space estimate disabled, so the write
    itself meets the full disk."""
    args = ["recover", str(model["definition"]), str(model["mesh"]), str(model["resultants"]), "-o", str(out),
            "--quiet", *extra]
    if not bypass_space_check:
        return run_cli(*args, timeout=300)
    code = ("import sys, bridge.results.partial as p; p.check_store_space = lambda *a, **k: None; "
            f"sys.argv = ['plybridge'] + {args!r}; from bridge.cli import main; main()")
    env = dict(os.environ)
    env.setdefault("NUMBA_CACHE_DIR", str(ROOT / ".numba-cache"))
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, env=env,
                          timeout=300)


def test_full_disk_refused_by_the_estimate(model):
    with tmpfs("3m") as disk:
        previous = disk / "RESULT.h5"
        previous.write_bytes(b"an earlier store")
        before = _listing(disk)
        proc = _recover(model, previous, "--store", "plies")
        line = assert_one_line_error(proc, "RESULT.h5", "needs about", "(estimate)", "free some space")
        assert "MiB free" in line
        assert _listing(disk) == before


def test_full_disk_while_writing_the_store(model):
    """The disk fills after some blocks (estimate bypassed): one line, no crash, no partial, journal or lock
    file, the previous store kept."""
    with tmpfs("8m") as disk:
        previous = disk / "RESULT.h5"
        shutil.copy(model["store"], previous)
        _fill(disk, leave=2_500_000)
        before = _listing(disk)
        proc = _recover(model, previous, "--store", "plies", "--block-cells", "50", bypass_space_check=True)
        line = assert_one_line_error(proc, "RESULT.h5", "no space left for block", "free some space")
        assert "block 0 " not in line  # some blocks were written first
        assert _listing(disk) == before


@pytest.mark.parametrize("command", ["assign", "section", "report", "plot", "render"])
def test_full_disk_other_commands(model, command, tmp_path):
    with tmpfs("1m") as disk:
        out = {"assign": disk / "a.vtu", "section": disk / "s.txt", "report": disk / "r.html",
               "plot": disk / "p.png", "render": disk / "m.png"}[command]
        out.write_bytes(b"previous output")
        _fill(disk)
        before = _listing(disk)
        args = {"assign": [model["definition"], model["mesh"]], "section": [model["definition"]],
                "report": [model["store"]], "plot": [model["store"]], "render": [model["store"]]}[command]
        proc = run_cli(command, *args, "-o", out, timeout=300)
        assert_one_line_error(proc, str(out), "no space left on the device", "free some space")
        assert _listing(disk) == before


def test_read_only_target_every_command(model):
    """A read-only file system: every command that writes gives one line and changes nothing."""
    with tmpfs("4m") as disk:
        shutil.copy(model["store"], disk / "RESULT.h5")
        (disk / "a.vtu").write_bytes(b"previous")
        _remount(disk, "ro")
        try:
            before = _listing(disk)
            runs = [
                ("recover", model["definition"], model["mesh"], model["resultants"], "-o", disk / "RESULT.h5"),
                ("assign", model["definition"], model["mesh"], "-o", disk / "a.vtu"),
                ("section", model["definition"], "-o", disk / "s.txt"),
                ("render", model["store"], "-o", disk / "m.png"),
                ("plot", model["store"], "-o", disk / "p.png"),
                ("report", model["store"], "-o", disk / "r.html"),
                ("compare", model["definition"], model["mesh"], model["resultants"], model["mesh"], "-o",
                 disk / "c.h5"),
            ]
            for argv in runs:
                proc = run_cli(*argv, timeout=300)
                assert_one_line_error(proc, "read-only file system", "writable folder")
                assert _listing(disk) == before, argv[0]
        finally:
            _remount(disk, "rw")


# ----------------------------------------------------------------------------- tampered journal and store

class _Stop(KeyboardInterrupt):
    pass


def _interrupted(model, out: Path, blocks: int, block_cells: int = 500):
    def stop(done, total):
        if done >= blocks * block_cells:
            raise _Stop

    with pytest.raises(_Stop):
        run_recover(str(model["definition"]), str(model["mesh"]), [str(model["resultants"])], str(out),
                    progress=stop, block_cells=block_cells)
    return partial_paths(out)


def _clean(model, tmp_path):
    out = tmp_path / "clean.h5"
    run_recover(str(model["definition"]), str(model["mesh"]), [str(model["resultants"])], str(out))
    return datasets(out)


def _resume(model, out):
    notes = []
    run_recover(str(model["definition"]), str(model["mesh"]), [str(model["resultants"])], str(out), resume=True,
                note=notes.append)
    return notes


def test_journal_listing_blocks_never_written(model, tmp_path):
    """A journal that claims every block (blocks never written included) is checked: the missing ones are
    computed, the result equals a clean run, and no cell is left without a margin."""
    out = tmp_path / "RESULT.h5"
    h5p, journal, _ = _interrupted(model, out, blocks=3)
    doc = json.loads(journal.read_text())
    doc["done"] += [[i, "0" * 64] for i in range(3, 12)]
    journal.write_text(json.dumps(doc))
    notes = _resume(model, out)
    assert any("9 block(s) listed as done do not match" in n for n in notes), notes
    assert any("3 block(s) already done and verified" in n for n in notes), notes
    assert_same_bits(datasets(out), _clean(model, tmp_path))
    with h5py.File(out, "r") as h5:
        assert (h5["cells/critical_ply"][()] >= 0).all() and verify_blocks(h5) == []


def test_journal_forged_with_checksums_of_empty_blocks(model, tmp_path):
    """Checksums that match never-written (fill-value) blocks still fail the every-cell-has-a-result check."""
    out = tmp_path / "RESULT.h5"
    h5p, journal, _ = _interrupted(model, out, blocks=2)
    doc = json.loads(journal.read_text())
    with h5py.File(h5p, "r") as h5:
        doc["done"] += [[i, digest(block_arrays(h5, i * 500, (i + 1) * 500))] for i in range(2, 12)]
    journal.write_text(json.dumps(doc))
    notes = _resume(model, out)
    assert any("10 block(s) listed as done" in n for n in notes), notes
    assert_same_bits(datasets(out), _clean(model, tmp_path))


def test_altered_block_is_computed_again(model, tmp_path):
    out = tmp_path / "RESULT.h5"
    h5p, journal, _ = _interrupted(model, out, blocks=4)
    with h5py.File(h5p, "r+") as h5:
        h5["cells/min_margin"][600] = 99.0  # block 1
    notes = _resume(model, out)
    assert any("1 block(s) listed as done do not match" in n and "block 1" in n for n in notes), notes
    assert_same_bits(datasets(out), _clean(model, tmp_path))


@pytest.mark.parametrize("tamper", ["index out of range", "duplicate index", "short checksum", "not a list",
                                    "other format", "huge"])
def test_malformed_journal_starts_afresh(model, tmp_path, tamper):
    out = tmp_path / "RESULT.h5"
    h5p, journal, _ = _interrupted(model, out, blocks=2)
    doc = json.loads(journal.read_text())
    if tamper == "index out of range":
        doc["done"].append([10 ** 9, "a" * 64])
    elif tamper == "duplicate index":
        doc["done"].append(doc["done"][0])
    elif tamper == "short checksum":
        doc["done"][0][1] = "abc"
    elif tamper == "not a list":
        doc["done"] = {"0": "x"}
    elif tamper == "other format":
        doc["format"] = "something-else"
    text = json.dumps(doc) if tamper != "huge" else " " * (17 * 2 ** 20)
    journal.write_text(text)
    notes = _resume(model, out)
    if tamper == "index out of range":  # well formed: the entry is ignored, the rest is verified
        assert any("2 block(s) already done and verified" in n for n in notes), notes
    else:
        assert any("nothing to resume" in n for n in notes), notes
    assert_same_bits(datasets(out), _clean(model, tmp_path))


def test_finished_store_blocks_verify_and_detect_changes(model, tmp_path):
    store = tmp_path / "s.h5"
    shutil.copy(model["store"], store)
    with h5py.File(store, "r+") as h5:
        assert verify_blocks(h5) == []
        h5["envelope/margin"][10, 0] = np.nextafter(h5["envelope/margin"][10, 0], np.inf)
        assert verify_blocks(h5) == [0]


def test_altered_store_refused_by_render_and_report(model, tmp_path):
    store = tmp_path / "s.h5"
    shutil.copy(model["store"], store)
    with h5py.File(store, "r+") as h5:
        h5["cells/critical_ply"][5] = -1
    for command in ("render", "report"):
        proc = run_cli(command, store, "-o", tmp_path / f"x.{'png' if command == 'render' else 'html'}", timeout=300)
        assert_one_line_error(proc, "s.h5", "1 cells hold no result", "run plybridge recover again")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.h5"]


#: An altered dataset and a command that reads it (render: the margin map; plot: the worst cell's profile
#: from /hotspots; report: all of these). One command each keeps the suite fast: they share one reader.
READERS = {"cells/min_margin": ("render",), "mesh/points": ("report",), "model/zone": ("plot",),
           "hotspots/ratio": ("plot",), "meta/run": ("report",)}


@pytest.mark.parametrize("dataset", list(READERS))
def test_a_value_altered_after_the_run_is_refused_by_its_readers(model, tmp_path, dataset):
    """One value changed after the run (a float by its last bit): every command that reads it refuses the store
    in one line, never works around it."""
    store = tmp_path / "s.h5"
    shutil.copy(model["store"], store)
    with h5py.File(store, "r+") as h5:
        ds = h5[dataset]
        if dataset == "meta/run":
            text = ds[()].replace(b'"title":"', b'"title":"x', 1)
            assert text != ds[()]
            del h5[dataset]
            h5.create_dataset(dataset, data=text, dtype=h5py.string_dtype())
        else:
            at = (min(4000, ds.shape[0] - 1),) + (0,) * (ds.ndim - 1)
            ds[at] = ds[at] + 1 if ds.dtype.kind in "iu" else np.nextafter(ds[at], np.inf)
    out = {"render": "m.png", "plot": "p.png", "report": "r.html"}
    for command in READERS[dataset]:
        proc = run_cli(command, store, "-o", tmp_path / out[command], timeout=300)
        assert_one_line_error(proc, "s.h5", "altered after the run", f"/{dataset}", "run plybridge recover again")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.h5"]


def test_only_the_blocks_read_are_verified(tmp_path):
    """Reads are checked block by block, ply states included: an altered block is refused when it is read,
    and cells of the other blocks read as usual."""
    from bridge.results.store import StoreReader
    from shells.errors import StoreError

    paths = write_model(tmp_path, nx=20, ny=10, n_cases=2)
    store = tmp_path / "plies.h5"
    run_recover(str(paths["definition"]), str(paths["mesh"]), [str(paths["resultants"])], str(store),
                store_plies=True, block_cells=50)
    with h5py.File(store, "r+") as h5:
        assert h5["check/parts"].shape == (4, len(h5["check/names"]))
        h5["plies/stress"][1, 120, 0, 0, 0] += 1.0                      # block 2 (cells 100 … 149)
    with StoreReader(store) as st:
        assert np.isfinite(st.h5["plies/stress"][0, 10]).all()          # block 0: verified, read
        st.array("cells/min_margin")                                    # every block of another dataset
        with pytest.raises(StoreError, match=r"/plies/stress, cells 100…149"):
            st.h5["plies/stress"][0, 130]
        with pytest.raises(StoreError, match="altered after the run"):
            st.array("plies/stress")


def test_giving_up_an_hdf5_file_on_a_full_disk():
    """close_h5(discard=True) after HDF5 met ENOSPC: the close succeeds and nothing is printed or crashes."""
    with tmpfs("2m") as disk:
        code = ("import numpy as np, h5py, os\n"
                "from bridge.atomic import close_h5\n"
                f"p = {str(disk / 'x.h5')!r}\n"
                "h5 = h5py.File(p, 'w')\n"
                "ds = h5.create_dataset('a', shape=(10**7,), dtype='f8', chunks=(65536,), compression='gzip')\n"
                "keep = [h5.create_dataset(f'b{k}', shape=(10**6,), dtype='f8', chunks=(65536,)) for k in range(8)]\n"
                "try:\n"
                "    for i in range(0, 10**7, 65536):\n"
                "        ds[i:i + 65536] = np.random.default_rng(i).random(65536)\n"
                "        for b in keep: b[:65536] = 1.0\n"
                "        h5.flush()\n"
                "    raise SystemExit('the disk never filled')\n"
                "except (OSError, RuntimeError) as exc:\n"
                "    assert 'errno = 28' in str(exc) or getattr(exc, 'errno', 0) == 28, exc\n"
                "close_h5(h5, discard=True)\n"
                "os.unlink(p)\n"
                "print('closed')\n")
        env = dict(os.environ)
        proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, env=env,
                              timeout=120)
        assert proc.returncode == 0, proc.stderr[-2000:]
        assert proc.stdout.strip() == "closed" and proc.stderr == ""
        assert list(disk.iterdir()) == []
