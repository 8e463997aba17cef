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
