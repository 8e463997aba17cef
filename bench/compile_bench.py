"""Compile-time benchmark: ``plybridge recover`` on a small model with an empty numba cache, then warm.

Each run is a fresh process (``python3 -m bridge.cli recover``) started in --root
(default: this checkout; give another checkout to compare before and after)
with ``NUMBA_CACHE_DIR`` pointing at a new empty folder for the cold run and at
the same folder for the warm run. Prints wall and CPU seconds of both and their
difference (the compile time) with ``uptime``.

    python bench/compile_bench.py [--root /path/to/checkout] [--cells 2000] [--cases 2] [--progressive]

With ``--progressive`` the definition also runs the ply discount (``[analysis.progressive]``).
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent
sys.path.insert(0, str(ROOT.parent))
sys.path.insert(0, str(ROOT))

import recover_bench  # noqa: E402


def timed(cmd, cwd, env) -> tuple[float, float]:
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t = time.perf_counter()
    proc = subprocess.run(cmd, cwd=cwd, env=env, capture_output=True, text=True)
    wall = time.perf_counter() - t
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if proc.returncode:
        raise SystemExit(f"recover failed:\n{proc.stderr[-2000:]}")
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--root", default=str(ROOT.parent))
    ap.add_argument("--cells", type=int, default=2000)
    ap.add_argument("--cases", type=int, default=2)
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    ap.add_argument("--progressive", action="store_true", help="with [analysis.progressive] in the definition")
    args = ap.parse_args(argv)
    paths = recover_bench.inputs(Path(args.work), args.cells, args.cases)
    if args.progressive:
        paths = recover_bench.with_progressive(paths)
    with tempfile.TemporaryDirectory(prefix="numba-cold-") as cache:
        env = dict(os.environ, NUMBA_CACHE_DIR=cache, PYTHONPATH=args.root)
        out = Path(cache) / "out.h5"
        cmd = [sys.executable, "-m", "bridge.cli", "recover", paths["definition"], paths["mesh"],
               paths["resultants"], "-o", str(out)]
        print(f"# {args.root}: {args.cells} cells × {args.cases} cases{' progressive' if args.progressive else ''}; "
              f"{subprocess.run(['uptime'], capture_output=True, text=True).stdout.strip()}", flush=True)
        cold = timed(cmd, args.root, env)
        out.unlink()
        warm = timed(cmd, args.root, env)
    print("run\twall_s\tcpu_s")
    print(f"cold\t{cold[0]:.1f}\t{cold[1]:.1f}\nwarm\t{warm[0]:.1f}\t{warm[1]:.1f}")
    print(f"compile\t{cold[0] - warm[0]:.1f}\t{cold[1] - warm[1]:.1f}")


if __name__ == "__main__":
    main()
