"""Recover benchmark: the kernel alone and the whole ``run_recover``, cells/s, ply-points/s and peak memory.

A flat grid of quads (nx × ny ≈ --cells), one 24-ply laminate, --cases load
cases, the default criteria at the bottom, middle and top of every ply. Each
measurement runs in its own subprocess so its peak resident memory
(``ru_maxrss``) is its own. Inputs are generated once per size in --work
(mesh as our XDMF, resultants as HDF5) and reused.

    python bench/recover_bench.py [--cells 1000000] [--cases 4] [--work /tmp/plybridge-bench]
    python bench/recover_bench.py --progressive [--cells 100000]   # the ply discount's cost against a plain run
    python bench/recover_bench.py --progressive --progressive-criteria tsai-wu   # failures found by Tsai-Wu only
    python bench/recover_bench.py --progressive --repeat 5     # five pairs, the median ratio (a shared machine drifts)

With ``--progressive`` the whole run is measured twice, as is and with ``[analysis.progressive]`` (the default
criteria find the failures, failed moduli set to zero), and the ratio of the two times is printed.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time
from pathlib import Path
from typing import Sequence

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

PLIES = 24
POINTS = 3
DEFINITION = (ROOT / "tests" / "corpus" / "base.toml").read_text(encoding="utf-8").replace(
    'layup = "[0/45/-45/90]s"', 'layup = "[0/45/-45/90]3s"')


def grid(n_cells: int):
    """A flat quad grid of about ``n_cells`` cells (nx = 2 ny), written without meshio."""
    from bridge.mesh.shell import ShellMesh

    ny = max(1, int(round((n_cells / 2) ** 0.5)))
    nx = max(1, n_cells // ny)
    x, y = np.meshgrid(np.linspace(0, 2.0 * nx, nx + 1), np.linspace(0, 1.0 * ny, ny + 1))
    pts = np.column_stack([x.ravel(), y.ravel(), np.zeros(x.size)])
    i, j = np.meshgrid(np.arange(nx), np.arange(ny))
    n0 = (j * (nx + 1) + i).ravel()
    quads = np.column_stack([n0, n0 + 1, n0 + nx + 2, n0 + nx + 1])
    return ShellMesh(pts, (("quad", quads),))


#: The ply discount appended to the benchmark definition (docs/criteria.md, progressive failure).
PROGRESSIVE = "\n[analysis.progressive]\n"


def with_progressive(paths: dict[str, str], criteria: Sequence[str] = ()) -> dict[str, str]:
    """The inputs with a definition that also runs the progressive failure analysis (written once), the failures
    found by ``criteria`` (default: the run's criteria)."""
    suffix = "-".join(criteria)
    target = Path(paths["definition"]).with_name(f"def-progressive{'-' + suffix if suffix else ''}.toml")
    if not target.exists():
        text = Path(paths["definition"]).read_text(encoding="utf-8")
        head, sep, tail = text.partition("[[zones]]")
        table = PROGRESSIVE + (f"criteria = {json.dumps(list(criteria))}\n" if criteria else "")
        target.write_text(head + table + "\n" + sep + tail, encoding="utf-8")
    return {**paths, "definition": str(target)}


def inputs(work: Path, n_cells: int, n_cases: int) -> dict[str, str]:
    """Definition, mesh (.xdmf) and resultants (.h5) of the benchmark, generated once."""
    import h5py

    from bridge.mesh.formats import write_mesh
    from bridge.recover.files import H5_DATASET

    folder = work / f"c{n_cells}-k{n_cases}"
    paths = {"definition": folder / "def.toml", "mesh": folder / "mesh.xdmf", "resultants": folder / "res.h5"}
    if all(p.exists() for p in paths.values()):
        return {k: str(v) for k, v in paths.items()}
    folder.mkdir(parents=True, exist_ok=True)
    mesh = grid(n_cells)
    write_mesh(paths["mesh"], mesh)
    rng = np.random.default_rng(0)
    scale = np.array([100.0, 50.0, 30.0, 20.0, 10.0, 5.0, 3.0, 2.0])
    tmp = paths["resultants"].with_suffix(".tmp")
    with h5py.File(tmp, "w") as h5:  # written case by case: bounded memory at any size
        chunk = min(mesh.n_cells, 65536)
        ds = h5.create_dataset(H5_DATASET, shape=(n_cases, mesh.n_cells, 8), dtype="f8",
                               chunks=(1, chunk, 8), compression="gzip", compression_opts=1, shuffle=True)
        ds.attrs["case_names"] = np.array([f"case{k + 1}".encode() for k in range(n_cases)])
        for k in range(n_cases):
            for s in range(0, mesh.n_cells, 1 << 20):
                e = min(mesh.n_cells, s + (1 << 20))
                ds[k, s:e] = rng.normal(size=(e - s, 8)) * scale
    os.replace(tmp, paths["resultants"])
    paths["definition"].write_text(DEFINITION, encoding="utf-8")
    return {k: str(v) for k, v in paths.items()}


def peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def measure_kernel(paths: dict[str, str], n_cells: int, n_cases: int) -> dict:
    """postproc.recover.recover_cells on in-memory arrays, after a warm-up call (compilation)."""
    from postproc.recover import recover_cells
    from shells.criteria import DEFAULT, by_name
    from shells.recovery_tables import build_tables
    from shells.section import Section  # noqa: F401 - imported for the tables' types
    from bridge.definition.loader import load_definition
    from bridge.model.sections import section_of

    defn = load_definition(paths["definition"])
    tables = build_tables([section_of(defn, "skin", 0.0)], ["skin"])
    crit = tuple(by_name(n) for n in DEFAULT)
    rng = np.random.default_rng(1)
    R = rng.normal(size=(n_cases, n_cells, 8)) * np.array([100.0, 50.0, 30.0, 20.0, 10.0, 5.0, 3.0, 2.0])
    sec = np.zeros(n_cells, np.int64)
    phi = np.zeros(n_cells)
    dT = np.zeros((n_cases, n_cells))
    z = np.zeros(n_cases)
    fos = np.full(n_cases, 1.5)
    recover_cells(crit, tables, sec[:64], phi[:64], R[:, :64], dT[:, :64], z, z, fos)  # compile / load
    t = time.perf_counter()
    recover_cells(crit, tables, sec, phi, R, dT, z, z, fos)
    dt = time.perf_counter() - t
    return {"seconds": dt, "cells_per_s": n_cells / dt,
            "ply_points_per_s": n_cells * n_cases * PLIES * POINTS / dt,
            "criterion_evaluations_per_s": n_cells * n_cases * PLIES * POINTS * len(crit) / dt}


def measure_command(paths: dict[str, str], n_cells: int, n_cases: int, out: str, **options) -> dict:
    """The whole run_recover from the HDF5 resultants, to a store (inputs hashed, store written)."""
    from bridge.recover.run import run_recover

    t, cpu = time.perf_counter(), time.process_time()
    run_recover(paths["definition"], paths["mesh"], [paths["resultants"]], out, **options)
    dt = time.perf_counter() - t
    n = grid(n_cells).n_cells
    return {"seconds": dt, "cpu_seconds": time.process_time() - cpu, "cells_per_s": n / dt,
            "ply_points_per_s": n * n_cases * PLIES * POINTS / dt}


def child(kind: str, paths: dict, n_cells: int, n_cases: int, out: str, options: dict) -> None:
    """Entry point of a measuring subprocess: print one JSON line."""
    if kind == "warm":  # compile and cache every kernel once, so timings exclude compilation
        measure_command(paths, 2000, n_cases, out + ".warm.h5", **options)
        result = {}
    elif kind == "kernel":
        result = measure_kernel(paths, n_cells, n_cases)
    else:
        result = measure_command(paths, n_cells, n_cases, out, **options)
    result["peak_mib"] = peak_mib()
    print(json.dumps(result))


def in_subprocess(kind: str, paths: dict, n_cells: int, n_cases: int, out: str, options: dict | None = None) -> dict:
    cmd = [sys.executable, __file__, "--child", json.dumps([kind, paths, n_cells, n_cases, out, options or {}])]
    proc = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT)
    if proc.returncode:
        raise SystemExit(f"{kind} measurement failed:\n{proc.stderr[-3000:]}")
    return json.loads(proc.stdout.strip().splitlines()[-1])


def report(label: str, r: dict) -> None:
    rate = f", {r['ply_points_per_s']:.3g} ply-points/s" if "ply_points_per_s" in r else ""
    cpu = f" (CPU {r['cpu_seconds']:.2f} s)" if "cpu_seconds" in r else ""
    print(f"{label:<26} {r.get('seconds', 0):8.2f} s{cpu}  {r.get('cells_per_s', 0):.3g} cells/s{rate}"
          f"  peak {r['peak_mib']:.0f} MiB", flush=True)


def parse(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=1_000_000)
    ap.add_argument("--cases", type=int, default=4)
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    ap.add_argument("--progressive", action="store_true", help="also time a run with [analysis.progressive]")
    ap.add_argument("--progressive-criteria", default="",
                    help="comma-separated criteria that find the failures of the ply discount (default: all the run's)")
    ap.add_argument("--repeat", type=int, default=1, help="pairs of plain and progressive runs (median printed)")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    return ap.parse_args(argv)


def main(argv=None) -> None:
    args = parse(argv)
    if args.child:
        child(*json.loads(args.child))
        return
    work = Path(args.work)
    t = time.perf_counter()
    paths = inputs(work, args.cells, args.cases)
    small = inputs(work, 2000, args.cases)
    print(f"inputs ready in {time.perf_counter() - t:.1f} s: {args.cells} cells, {args.cases} cases, "
          f"{PLIES} plies, {POINTS} points, criteria max-stress, max-strain, tsai-wu, hashin", flush=True)
    out = str(work / "bench-out.h5")
    if args.progressive:
        chosen = [c for c in args.progressive_criteria.split(",") if c]
        in_subprocess("warm", with_progressive(small, chosen), 2000, args.cases, out, {})
        ratios = []
        for _ in range(args.repeat):          # plain and progressive one after the other: the machine's load
            plain = in_subprocess("command", paths, args.cells, args.cases, out)   # drifts less within a pair
            report("whole run_recover", plain)
            prog = in_subprocess("command", with_progressive(paths, chosen), args.cells, args.cases, out)
            report("with progressive failure", prog)
            ratios.append((prog["seconds"] / plain["seconds"], prog["cpu_seconds"] / plain["cpu_seconds"]))
            print(f"progressive / plain time: {ratios[-1][0]:.2f} (wall), {ratios[-1][1]:.2f} (CPU time of the "
                  "process, all threads: the fairer figure on a shared machine)", flush=True)
        if len(ratios) > 1:
            wall, cpu = np.median(ratios, axis=0)
            print(f"median of {len(ratios)} pairs: {wall:.2f} (wall), {cpu:.2f} (CPU); CPU range "
                  f"{min(r[1] for r in ratios):.2f}–{max(r[1] for r in ratios):.2f}")
        return
    in_subprocess("warm", small, 2000, args.cases, out, {})
    kernel = in_subprocess("kernel", paths, args.cells, args.cases, out)
    report("kernel (recover_cells)", kernel)
    print(f"{'':<26} {kernel['criterion_evaluations_per_s']:.3g} criterion evaluations/s", flush=True)
    command = in_subprocess("command", paths, args.cells, args.cases, out)
    report("whole run_recover", command)
    print(f"whole / kernel rate: {command['ply_points_per_s'] / kernel['ply_points_per_s']:.2f}")


if __name__ == "__main__":
    main()
