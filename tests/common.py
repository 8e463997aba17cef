"""Paths and helpers shared by tests (import as ``from tests.common import ...``)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "examples" / "definition.toml"


def run_cli(*args, timeout: float = 600) -> subprocess.CompletedProcess:
    """Run ``plybridge ARGS`` in a fresh interpreter (as a user would), capturing stdout and stderr."""
    env = dict(os.environ)
    env.setdefault("NUMBA_CACHE_DIR", str(ROOT / ".numba-cache"))
    return subprocess.run([sys.executable, "-m", "bridge.cli", *map(str, args)], capture_output=True, text=True,
                          cwd=ROOT, timeout=timeout, env=env)


def assert_one_line_error(proc: subprocess.CompletedProcess, *needles: str) -> str:
    """Exit code 2, exactly one line on stderr containing every needle, no traceback."""
    assert proc.returncode == 2, (proc.returncode, proc.stderr)
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    assert "Traceback" not in proc.stderr
    for needle in needles:
        assert needle in lines[0], (needle, lines[0])
    return lines[0]

#: The graphite/epoxy ply of Kaw, Mechanics of Composite Materials, 2nd ed. (2006), Table 2.1, as the body of a
#: ``[materials.NAME]`` table in N-mm (moduli, ν12 and strengths; add thickness and other keys after it).
KAW_PLY_TOML = """E1 = "181 GPa"
E2 = "10.3 GPa"
G12 = "7.17 GPa"
nu12 = 0.28
Xt = 1500
Xc = 1500
Yt = 40
Yc = 246
S12 = 68
"""


def recover_once(tmp_path, definition: str, R, mesh=None, names=None, name: str = "o.h5",
                 store_plies: bool = False):
    """Write ``mesh`` (default a 3 × 2 flat plate), resultants ``R`` (ncase, 1 or ncell, 8) broadcast over its
    cells and ``definition``; run ``recover`` in-process. Returns (summary, store path)."""
    import numpy as np

    from bridge.mesh.formats import write_mesh
    from bridge.recover.resultants import write_resultants_h5
    from bridge.recover.run import run_recover
    from tests.meshes import flat_plate

    mesh = mesh or flat_plate(3, 2)
    write_mesh(tmp_path / "m.vtu", mesh)
    names = names or [f"s{k + 1}" for k in range(R.shape[0])]
    write_resultants_h5(tmp_path / "r.h5", names, np.broadcast_to(R, (R.shape[0], mesh.n_cells, 8)).copy())
    (tmp_path / "d.toml").write_text(definition, encoding="utf-8")
    out = tmp_path / name
    summary = run_recover(str(tmp_path / "d.toml"), str(tmp_path / "m.vtu"), [str(tmp_path / "r.h5")], str(out),
                          store_plies=store_plies)
    return summary, out


def kaw_definition(layup: str, laminate: str = "l", criteria: str = '["max-stress"]', thickness: float = 0.125,
                   material: str = "") -> str:
    """An N-mm definition of Kaw's ply (``KAW_PLY_TOML``, named ``cf``, plies ``thickness`` thick, ``material``
    lines added to it) in the laminate ``layup``, ending in its ``[analysis]`` table with ``criteria``: append
    more analysis keys, then zones (:func:`zone_cases`)."""
    return (f'units = "N-mm"\n[materials.cf]\n{KAW_PLY_TOML}thickness = {thickness!r}\n{material}'
            f'[laminates.{laminate}]\nlayup = "{layup}"\nmaterial = "cf"\n[analysis]\ncriteria = {criteria}\n')


def zone_cases(laminate: str, cases: dict) -> str:
    """One zone of ``laminate`` over every cell and the ``[cases.NAME]`` tables of ``cases`` (name → keys; strings
    are quoted, numbers written as they are)."""
    out = [f'[[zones]]\nlaminate = "{laminate}"\n']
    for name, keys in cases.items():
        out.append(f"[cases.{name}]\n" + "".join(f"{k} = {v!r}\n" if not isinstance(v, str) else f'{k} = "{v}"\n'
                                                  for k, v in keys.items()))
    return "".join(out)
