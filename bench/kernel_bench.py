"""Kernel benchmark: the product's recovery against hand-fused reference kernels, in one process, same data.

Prints, for the default criteria (max stress, max strain, Tsai-Wu, Hashin) and
for the default criteria plus Puck and plus LaRC03: the rate of the plain fused
reference (``bench/reference_default.py``; the vectorised one for the default
set too), of the product's kernel (``postproc.recover.recover_into``) and of the
whole ``plybridge recover`` (mesh + HDF5 in, store out), in ply-points/s, their
ratios, and the kernel's scaling in cells, cases and plies. Every case holds a
thermal part (ΔT = −75 °C, never scaled). The reference's envelope is checked
against the product's on every run (margins to 1e-15 relative; case, point,
criterion and mode equal).

    python bench/kernel_bench.py [--cells 20000] [--cases 4] [--plies 24] [--no-scaling]
    python bench/kernel_bench.py --cells 200000 --cases 20          # the size of issue 15

Reference and product run in the same process one after the other, best of
--repeat runs each, so a shared machine's load affects both alike; ``uptime``
is printed with the figures.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent
sys.path.insert(0, str(ROOT.parent))
sys.path.insert(0, str(ROOT))

import recover_bench  # noqa: E402
import reference_default as ref  # noqa: E402

DELTA_T = -75.0
POINTS = 3
SCALE = np.array([100.0, 50.0, 30.0, 20.0, 10.0, 5.0, 3.0, 2.0])
SETS = {"default": (), "default+puck": ("puck",), "default+larc03": ("larc03",)}
EXTRA = {"default": -1, "default+puck": 6, "default+larc03": 7}


def definition(plies: int, cases: int, extra: tuple) -> str:
    """The benchmark's definition: a [0/45/-45/90]ks layup of ``plies`` plies, every case at ΔT = −75 °C."""
    if plies % 8:
        raise SystemExit("--plies must be a multiple of 8 ([0/45/-45/90]ks)")
    text = recover_bench.DEFINITION.replace('layup = "[0/45/-45/90]3s"', f'layup = "[0/45/-45/90]{plies // 8}s"')
    names = ", ".join(f'"{c}"' for c in ("max-stress", "max-strain", "tsai-wu", "hashin") + extra)
    text += f"\n[analysis]\ncriteria = [{names}]\n"
    for k in range(cases):
        text += f'\n[cases.case{k + 1}]\nstep = {k + 1}\ndelta_T = "{DELTA_T} degC"\n'
    return text


def tables_of(text: str, work: Path):
    """Section tables of the benchmark's definition (one section)."""
    from bridge.definition.loader import load_definition
    from bridge.model.sections import section_of
    from shells.recovery_tables import build_tables

    path = work / "kernel-def.toml"
    path.write_text(text, encoding="utf-8")
    defn = load_definition(str(path))
    return build_tables([section_of(defn, "skin", 0.0)], ["skin"]), defn


def load_case_data(cells: int, cases: int, seed: int = 1):
    rng = np.random.default_rng(seed)
    R = rng.normal(size=(cases, cells, 8)) * SCALE
    return R, np.full((cases, cells), DELTA_T), np.zeros(cases), np.zeros(cases), np.full(cases, 1.5)


def product(criteria, tables, R, dT, dM, pres, fos):
    """The product's kernel on in-memory arrays: ``recover_into`` on a fresh envelope."""
    from postproc.recover import recover_into
    from shells.criteria import CRITERIA
    from shells.recovery_args import Envelope

    ncase, ncell = R.shape[:2]
    env = Envelope.empty(ncell, tables.max_plies, ncase, len(CRITERIA))
    recover_into(env, criteria, tables, np.zeros(ncell, np.int64), np.zeros(ncell), R, dT, dM, pres, fos)
    return env


def best(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def check(env, out, extra: int) -> str:
    """Compare the product's envelope with a reference's: the worst relative margin difference, or a refusal."""
    codes = list(ref.CODES) + ([extra] if extra >= 0 else [])
    a, b = env.margin, out["margin"]
    if not np.array_equal(np.isinf(a), np.isinf(b)):
        raise SystemExit("reference and product disagree on which plies have a margin")
    fin = np.isfinite(a)
    rel = float(np.max(np.abs(a[fin] - b[fin]) / np.maximum(np.abs(b[fin]), 1e-300), initial=0.0))
    same = all(np.array_equal(getattr(env, k), out[k]) for k in ("case", "point", "criterion", "mode"))
    crit = np.array_equal(env.criterion_margin[:, codes], out["criterion_margin"][:, :len(codes)])
    cases = np.array_equal(env.case_margin, out["case_margin"])
    if rel > 1e-15 or not same or not crit or not cases:
        raise SystemExit(f"reference and product differ: margins {rel:.3g} relative, where equal {same}, "
                         f"per-criterion minima equal {crit}, per-case minima equal {cases}")
    return "bit-identical" if np.array_equal(a, b) else f"margins to {rel:.1e} relative"


def kernel_rates(name: str, tables, R, dT, dM, pres, fos, repeat: int, vector: bool) -> dict:
    from shells.criteria import by_name
    from shells.criteria.registry import DEFAULT

    criteria = tuple(by_name(n) for n in DEFAULT + SETS[name])
    extra = EXTRA[name]
    args = (tables, np.zeros(R.shape[1]), R, dT, dM, pres, fos)
    small = tuple(a[:, :64] if a.ndim >= 2 else a for a in (R, dT)) + (dM, pres, fos)
    ref.run(ref.plain, tables, np.zeros(64), *small, extra=extra)          # compile / load
    product(criteria, tables, *small)
    points = R.shape[0] * R.shape[1] * int(tables.nply[0]) * POINTS
    out = {}
    t_ref = best(lambda: out.setdefault("plain", ref.run(ref.plain, *args, extra=extra)), repeat)
    t_prod = best(lambda: out.setdefault("product", product(criteria, tables, R, dT, dM, pres, fos)), repeat)
    rates = {"reference": points / t_ref, "kernel": points / t_prod,
             "equal": check(out["product"], out["plain"], extra)}
    if vector:
        ref.run(ref.vector, tables, np.zeros(64), *small)
        t_vec = best(lambda: out.setdefault("vector", ref.run(ref.vector, *args)), repeat)
        check(out["product"], out["vector"], -1)
        rates["vector"] = points / t_vec
    return rates


def end_to_end(name: str, text: str, work: Path, cells: int, cases: int, plies: int) -> float:
    """Ply-points/s of the whole recover (mesh + HDF5 in, store out), after a warm-up run on 2000 cells."""
    from bridge.recover.run import run_recover

    for n in (2000, cells):
        paths = recover_bench.inputs(work, n, cases)
        dfile = Path(paths["mesh"]).parent / f"def-{name}-{plies}.toml"
        dfile.write_text(text, encoding="utf-8")
        t = time.perf_counter()
        run_recover(str(dfile), paths["mesh"], [paths["resultants"]], str(work / f"out-{name}.h5"))
        dt = time.perf_counter() - t
    return recover_bench.grid(cells).n_cells * cases * plies * POINTS / dt


def uptime() -> str:
    try:
        return subprocess.run(["uptime"], capture_output=True, text=True).stdout.strip()
    except OSError:
        return "uptime unavailable"


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=20000)
    ap.add_argument("--cases", type=int, default=4)
    ap.add_argument("--plies", type=int, default=24)
    ap.add_argument("--repeat", type=int, default=2)
    ap.add_argument("--sets", default=",".join(SETS), help="criteria sets: " + ", ".join(SETS))
    ap.add_argument("--no-scaling", action="store_true")
    ap.add_argument("--no-end-to-end", action="store_true")
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    args = ap.parse_args(argv)
    work = Path(args.work)
    work.mkdir(parents=True, exist_ok=True)
    import numba

    print(f"# {args.cells} cells × {args.cases} cases × {args.plies} plies × {POINTS} points, ΔT = {DELTA_T} °C "
          f"held; numba threads {numba.get_num_threads()}, cpus {os.cpu_count()}")
    print(f"# {uptime()}")
    print("set\treference\tkernel\tend_to_end\tkernel/ref\te2e/ref\tvector_ref\tkernel/vector\tcheck")
    R, dT, dM, pres, fos = load_case_data(args.cells, args.cases)
    for name in args.sets.split(","):
        text = definition(args.plies, args.cases, SETS[name])
        tables, _ = tables_of(text, work)
        r = kernel_rates(name, tables, R, dT, dM, pres, fos, args.repeat, name == "default")
        e2e = np.nan if args.no_end_to_end else end_to_end(name, text, work, args.cells, args.cases, args.plies)
        vec = r.get("vector", np.nan)
        print(f"{name}\t{r['reference']:.3g}\t{r['kernel']:.3g}\t{e2e:.3g}\t{r['kernel'] / r['reference']:.2f}\t"
              f"{e2e / r['reference']:.2f}\t{vec:.3g}\t{r['kernel'] / vec:.2f}\t{r['equal']}", flush=True)
    if args.no_scaling:
        print(f"# {uptime()}")
        return
    print("\n# scaling of the default set (kernel and plain reference, ply-points/s)")
    print("cells\tcases\tplies\treference\tkernel\tkernel/ref")
    c, k, p = args.cells, args.cases, args.plies
    for cells, cases, plies in ((c // 4, k, p), (c // 2, k, p), (c, k, p), (c, max(1, k // 2), p),
                                (c, 2 * k, p), (c, k, 8), (c, k, 2 * p)):
        tables, _ = tables_of(definition(plies, cases, ()), work)
        data = load_case_data(cells, cases)
        r = kernel_rates("default", tables, *data, args.repeat, False)
        print(f"{cells}\t{cases}\t{plies}\t{r['reference']:.3g}\t{r['kernel']:.3g}\t"
              f"{r['kernel'] / r['reference']:.2f}", flush=True)
    print(f"# {uptime()}")


if __name__ == "__main__":
    main()
