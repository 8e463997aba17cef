"""The numba cache folder is keyed on the package sources, so an edited criterion is never served stale."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

from shells import numba_cache

ROOT = Path(__file__).resolve().parent.parent


def test_key_changes_when_a_criterion_source_changes(tmp_path):
    copy = tmp_path / "shells"
    shutil.copytree(numba_cache.PACKAGE, copy, ignore=shutil.ignore_patterns("__pycache__"))
    assert numba_cache.source_key(copy) == numba_cache.source_key()
    target = copy / "criteria" / "tsai_wu.py"
    target.write_text(target.read_text(encoding="utf-8").replace("F12STAR]", "F12STAR] * 1.0"), encoding="utf-8")
    assert numba_cache.source_key(copy) != numba_cache.source_key()


def test_params_layout_is_part_of_the_key(tmp_path):
    # The kernels freeze the property-vector indices of shells/params.py at compile time.
    copy = tmp_path / "shells"
    shutil.copytree(numba_cache.PACKAGE, copy, ignore=shutil.ignore_patterns("__pycache__"))
    (copy / "params.py").write_text((copy / "params.py").read_text(encoding="utf-8") + "\n# edit\n",
                                    encoding="utf-8")
    assert numba_cache.source_key(copy) != numba_cache.source_key()


def test_folder_rules():
    key = "0123456789abcdef"
    assert numba_cache.cache_folder(key, {"NUMBA_CACHE_DIR": "/c"}) == Path("/c") / f"plybridge-{key}"
    # a folder already keyed (a child process inherits it) is kept as is
    assert numba_cache.cache_folder(key, {"NUMBA_CACHE_DIR": f"/c/plybridge-{key}"}) == Path(f"/c/plybridge-{key}")
    assert numba_cache.cache_folder(key, {"XDG_CACHE_HOME": "/x"}) == Path("/x/plybridge") / f"numba-{key}"


def _cache_dir_in_child(env: dict) -> str:
    code = "import shells.criteria; from numba.core import config; print(config.CACHE_DIR)"
    proc = subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=env, capture_output=True, text=True,
                          timeout=300)
    assert proc.returncode == 0, proc.stderr
    return proc.stdout.strip().splitlines()[-1]


def test_importing_shells_points_numba_at_the_keyed_folder(tmp_path):
    key = numba_cache.source_key()
    env = {k: v for k, v in os.environ.items() if k != "NUMBA_CACHE_DIR"}
    env["NUMBA_CACHE_DIR"] = str(tmp_path / "user")
    assert _cache_dir_in_child(env) == str(tmp_path / "user" / f"plybridge-{key}")
    env.pop("NUMBA_CACHE_DIR")
    env["XDG_CACHE_HOME"] = str(tmp_path / "xdg")
    folder = _cache_dir_in_child(env)
    assert folder == str(tmp_path / "xdg" / "plybridge" / f"numba-{key}") and Path(folder).is_dir()


_RECOVER_ONCE = """
import numpy as np
from postproc.recover import recover_cells
from shells.criteria import CRITERIA
from shells.laminate import Laminate, Ply
from shells.materials import Orthotropic
from shells.recovery import recover_block
from shells.recovery_tables import build_tables
from shells.section import build_section
m = Orthotropic("m", E1=181e3, E2=10.3e3, G12=7.17e3, nu12=0.28, Xt=1500, Xc=1500, Yt=40, Yc=246, S12=68)
tables = build_tables([build_section(Laminate("l", (Ply(m, 0, 0.2), Ply(m, 90, 0.2))))])
R = np.ones((1, 2, 8))
for store in (False, True):
    recover_cells(CRITERIA[:1], tables, np.zeros(2, np.int64), np.zeros(2), R, np.zeros((1, 2)), np.zeros(1),
                  np.zeros(1), np.ones(1), store_plies=store)
print(sum(recover_block.stats.cache_hits.values()), sum(recover_block.stats.cache_misses.values()))
"""


def test_a_second_process_loads_the_kernel_from_the_cache():
    # The kernel takes named tuples of arrays (shells.recovery_args); numba caches such signatures across
    # processes. The first process may compile; the second must only load.
    runs = []
    for _ in range(2):
        proc = subprocess.run([sys.executable, "-c", _RECOVER_ONCE], cwd=ROOT, capture_output=True, text=True,
                              timeout=900, env=dict(os.environ))
        assert proc.returncode == 0, proc.stderr[-2000:]
        runs.append(tuple(int(v) for v in proc.stdout.split()[-2:]))
    hits, misses = runs[1]
    assert hits == 1 and misses == 0, runs   # one signature: with and without stored plies alike
