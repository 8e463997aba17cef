"""Cost of verifying a finished store as it is read: checksummed reads against plain h5py reads.

A store of --cells cells (24 plies, --cases cases; written once into --work with the inputs of
bench/recover_bench.py) is opened with :class:`bridge.results.store.StoreReader`, and the datasets that
``render`` and ``report`` read are read whole through it (each block or dataset checked against /check) and
again with plain h5py (no check). Also timed: the completeness check at open, and :func:`verify_blocks` (every
block of every block dataset, whole).

    python bench/store_check_bench.py [--cells 1000000] [--cases 4] [--work /tmp/plybridge-bench]
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

#: What render (margin map) and report read: the cell summary, the envelope, the model, the mesh, the metadata.
DATASETS = ("cells/min_margin", "cells/critical_ply", "envelope/margin", "model/zone", "model/section",
            "mesh/points", "mesh/block000_quad", "meta/run")


#: Rounds of plain and checked reads (the first is a warm-up; the fastest of the others is shown).
REPEATS = 4


def store_of(work: Path, n_cells: int, n_cases: int) -> Path:
    from bench.recover_bench import inputs
    from bridge.recover.run import run_recover

    paths = inputs(work, n_cells, n_cases)
    out = Path(paths["definition"]).parent / "store.h5"
    if not out.exists():
        t = time.perf_counter()
        run_recover(paths["definition"], paths["mesh"], [paths["resultants"]], str(out))
        print(f"store written in {time.perf_counter() - t:.1f} s", flush=True)
    return out


def main(argv=None) -> None:
    import h5py

    from bench.recover_bench import parse

    args = parse(argv)                                  # --cells, --cases, --work as bench/recover_bench.py

    from bridge.results.complete import verify_blocks
    from bridge.results.store import StoreReader

    path = store_of(Path(args.work), args.cells, args.cases)
    with h5py.File(path, "r") as h5:
        size = sum(h5[name].nbytes for name in DATASETS)
    raw, checked, opened = [], [], []
    for _ in range(REPEATS):                      # alternated, after one plain read warms the page cache
        with h5py.File(path, "r") as h5:
            t = time.perf_counter()
            for name in DATASETS:
                h5[name][()]
            raw.append(time.perf_counter() - t)
        t = time.perf_counter()
        with StoreReader(path) as st:
            opened.append(time.perf_counter() - t)
            for name in DATASETS:
                st.h5[name][()]
        checked.append(time.perf_counter() - t - opened[-1])
    raw, checked, opened = min(raw[1:]), min(checked[1:]), min(opened[1:])
    t = time.perf_counter()
    with h5py.File(path, "r") as h5:
        assert verify_blocks(h5) == []
    every = time.perf_counter() - t
    print(f"{args.cells} cells x {args.cases} cases, {len(DATASETS)} datasets, {size / 2 ** 20:.0f} MiB read:")
    print(f"  open (completeness record, every cell holds a result)  {opened:6.2f} s")
    print(f"  plain h5py reads                                       {raw:6.2f} s")
    print(f"  reads checked against /check                           {checked:6.2f} s "
          f"(+{checked - raw:.2f} s, {100 * (checked - raw) / raw:.0f} %)")
    print(f"  verify_blocks (every block dataset, whole)             {every:6.2f} s")


if __name__ == "__main__":
    main()
