"""Scale benchmark: 5,000,000 cells × 10 cases through the whole ``run_recover``; peak memory and time.

The target is a peak resident memory under 2 GB: block work is bounded
(bridge.recover.run.BLOCK_BYTES); what grows with the model is the per-cell
model data (frames, angles, zones) and the mesh. Inputs are generated once in
--work and reused; the run is measured in its own subprocess.

    python bench/scale_bench.py [--cells 5000000] [--cases 10] [--work /tmp/plybridge-bench]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from recover_bench import in_subprocess, inputs, report  # noqa: E402


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=5_000_000)
    ap.add_argument("--cases", type=int, default=10)
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    args = ap.parse_args(argv)
    work = Path(args.work)
    t = time.perf_counter()
    paths = inputs(work, args.cells, args.cases)
    print(f"inputs ready in {time.perf_counter() - t:.1f} s ({args.cells} cells, {args.cases} cases)", flush=True)
    out = str(work / "scale-out.h5")
    in_subprocess("warm", inputs(work, 2000, args.cases), 2000, args.cases, out, {})
    r = in_subprocess("command", paths, args.cells, args.cases, out)
    report("whole run_recover", r)
    print(f"peak memory {r['peak_mib'] / 1024:.2f} GiB (target < 2 GB); store "
          f"{Path(out).stat().st_size / 2 ** 20:.0f} MiB")


if __name__ == "__main__":
    main()
