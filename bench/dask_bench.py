"""Distributed overhead: a LocalCluster of 2 single-threaded workers vs the serial run (numba on 2 cores).

Both runs use the same inputs and block size and write a store; the cluster's
start-up is timed apart from the run. Each measurement runs in its own
subprocess (peak memory of the driver; workers are separate processes).

    python bench/dask_bench.py [--cells 1000000] [--cases 4] [--work /tmp/plybridge-bench]
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from recover_bench import inputs, measure_command, peak_mib, report  # noqa: E402


def child_distributed(paths: dict, n_cells: int, n_cases: int, out: str) -> dict:
    """Start the cluster (timed), then the run on it (timed)."""
    from distributed import Client, LocalCluster

    from bridge.recover.distributed import WORKER_ENV

    t = time.perf_counter()
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None, env=dict(WORKER_ENV), silence_logs=40) as cluster, \
            Client(cluster) as client:
        startup = time.perf_counter() - t
        warm = measure_command(inputs(Path(out).parent, 2000, n_cases), 2000, n_cases, out + ".warm.h5",
                               client=client)  # workers load the cached kernels once
        r = measure_command(paths, n_cells, n_cases, out, client=client)
    return {**r, "startup_s": startup, "warm_s": warm["seconds"]}


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=1_000_000)
    ap.add_argument("--cases", type=int, default=4)
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    work = Path(args.work)
    if args.child:
        paths, out = json.loads(args.child)
        r = child_distributed(paths, args.cells, args.cases, out)
        r["peak_mib"] = peak_mib()
        print(json.dumps(r))
        return
    import subprocess

    from recover_bench import in_subprocess

    paths = inputs(work, args.cells, args.cases)
    out = str(work / "dask-out.h5")
    in_subprocess("warm", inputs(work, 2000, args.cases), 2000, args.cases, out, {})
    serial = in_subprocess("command", paths, args.cells, args.cases, out)
    report("serial run_recover", serial)
    proc = subprocess.run([sys.executable, __file__, "--cells", str(args.cells), "--cases", str(args.cases),
                           "--work", str(work), "--child", json.dumps([paths, out])], capture_output=True, text=True)
    if proc.returncode:
        raise SystemExit(proc.stderr[-3000:])
    dist = json.loads(proc.stdout.strip().splitlines()[-1])
    report("2 dask workers", dist)
    print(f"cluster start-up {dist['startup_s']:.1f} s, first small run {dist['warm_s']:.1f} s; "
          f"run overhead vs serial {dist['seconds'] / serial['seconds'] - 1:+.0%}")


if __name__ == "__main__":
    main()
