"""Compare benchmark: the whole ``run_compare`` streamed in blocks, time and peak memory.

A flat grid of quads (about --cells cells), the 8-ply [0/45/-45/90]s laminate of tests/corpus/base.toml,
--cases load cases as HDF5 resultants, and the "solver's" ply stresses — our own recovery of the same
resultants, so the comparison passes — written as an XDMF series (one grid per case, HDF5 heavy data): the
bottom and top of every ply (16 of 24 ply points), three material-axes components each. Inputs are generated
once per size in --work, block by block (bounded memory), and reused. The run is measured in its own
subprocess so its peak resident memory (``ru_maxrss``) is its own, and the inputs are generated in another
subprocess: a child's ``ru_maxrss`` starts from its parent's resident memory when it is started (Linux carries
the old address space's high-water mark across exec), so the parent stays small. Goals (issue 13): under 1 GiB at
30,000 cells × 5 cases and under 2 GiB at 1,000,000 cells × 4 cases.

    python bench/compare_bench.py [--cells 30000] [--cases 5] [--workers N] [--work /tmp/plybridge-bench]
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

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench.recover_bench import grid  # noqa: E402

POINTS = (("bottom", 0), ("top", 2))
SOLVER_PLIES = """
[solver_plies]
pattern = "ply{ply}_{point}"
points = { bottom = "bottom", top = "top" }
components = ["sigma1", "sigma2", "tau12"]
"""
DEFINITION = (ROOT / "tests" / "corpus" / "base.toml").read_text(encoding="utf-8") + SOLVER_PLIES


def inputs(work: Path | str, n_cells: int, n_cases: int) -> dict[str, str]:
    """Definition, mesh (.xdmf), resultants (.h5) and solver ply values (.xdmf + .h5), generated once."""
    import h5py

    from bridge.definition.cases import combine_steps
    from bridge.definition.loader import load_definition
    from bridge.mesh.formats import write_mesh
    from bridge.model.build import build_model
    from bridge.recover.files import H5_DATASET
    from postproc.compare import reference_values

    folder = Path(work) / f"cmp-c{n_cells}-k{n_cases}"
    paths = {"definition": folder / "def.toml", "mesh": folder / "mesh.xdmf", "resultants": folder / "res.h5",
             "solver": folder / "plies.xdmf"}
    if all(p.exists() for p in paths.values()):
        return {k: str(v) for k, v in paths.items()}
    folder.mkdir(parents=True, exist_ok=True)
    mesh = grid(n_cells)
    n = mesh.n_cells
    write_mesh(paths["mesh"], mesh)
    paths["definition"].write_text(DEFINITION, encoding="utf-8")
    defn = load_definition(paths["definition"])
    model = build_model(defn, mesh)
    tables = model.tables()
    names = [f"case{k + 1}" for k in range(n_cases)]
    rng = np.random.default_rng(0)
    scale = np.array([100.0, 50.0, 30.0, 20.0, 10.0, 5.0, 3.0, 2.0])
    step = 1 << 16
    solver_h5 = paths["solver"].with_suffix(".h5")
    with h5py.File(paths["resultants"], "w") as res, h5py.File(solver_h5, "w") as ply:
        ds = res.create_dataset(H5_DATASET, shape=(n_cases, n, 8), dtype="f8", chunks=(1, min(n, step), 8))
        ds.attrs["case_names"] = np.array([c.encode() for c in names])
        out = {(c, k, p): ply.create_dataset(f"/{c}/ply{k + 1}_{p}", shape=(n, 3), dtype="f8", chunks=(min(n, step), 3))
               for c in names for k in range(tables.max_plies) for p, _ in POINTS}
        for s in range(0, n, step):
            e = min(n, s + step)
            R = rng.normal(size=(n_cases, e - s, 8)) * scale
            ds[:, s:e] = R
            ours = reference_values(tables, model.section[s:e], model.phi[s:e], combine_steps(np.eye(n_cases), R),
                                    np.zeros((n_cases, e - s)), None, None, "stress")
            for (c, k, p), d in out.items():
                d[s:e] = ours[names.index(c), :, k, dict(POINTS)[p], :3]
    _series_xml(paths["solver"], solver_h5.name, mesh, names, tables.max_plies)
    return {k: str(v) for k, v in paths.items()}


def _series_xml(path: Path, h5name: str, mesh, names, plies: int) -> None:
    """The XDMF series of the solver's ply values (mesh datasets taken from the mesh file's .h5)."""
    mesh_h5 = path.with_name("mesh.h5").name
    n, nodes = mesh.n_cells, len(mesh.points)
    grids = []
    for t, c in enumerate(names):
        atts = "".join(
            f'<Attribute Name="ply{k + 1}_{p}" AttributeType="Vector" Center="Cell"><DataItem DataType="Float" '
            f'Precision="8" Format="HDF" Dimensions="{n} 3">{h5name}:/{c}/ply{k + 1}_{p}</DataItem></Attribute>'
            for k in range(plies) for p, _ in POINTS)
        grids.append(
            f'<Grid Name="{c}" GridType="Uniform"><Time Value="{t}"/><Information Name="case" Value="{c}"/>'
            f'<Topology TopologyType="Quadrilateral" NumberOfElements="{n}" NodesPerElement="4"><DataItem '
            f'DataType="Int" Precision="8" Format="HDF" Dimensions="{n} 4">{mesh_h5}:/mesh/topology</DataItem>'
            f'</Topology><Geometry GeometryType="XYZ"><DataItem DataType="Float" Precision="8" Format="HDF" '
            f'Dimensions="{nodes} 3">{mesh_h5}:/mesh/points</DataItem></Geometry>{atts}</Grid>')
    path.write_text('<?xml version="1.0"?>\n<Xdmf Version="3.0"><Domain><Grid Name="steps" GridType="Collection" '
                    f'CollectionType="Temporal">{"".join(grids)}</Grid></Domain></Xdmf>\n', encoding="utf-8")


def child(paths: dict, out: str, workers) -> None:
    """Entry point of the measuring subprocess: print one JSON line."""
    from bridge.compare.run import run_compare

    t = time.perf_counter()
    summary = run_compare(paths["definition"], paths["mesh"], [paths["resultants"]], [paths["solver"]], out,
                          workers=workers)
    dt = time.perf_counter() - t
    print(json.dumps({"seconds": dt, "verdict": summary["verdict"], "compared_values": summary["compared_values"],
                      "coverage": summary["coverage"]["text"],
                      "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0,
                      "children_peak_mib": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0}))


def _inputs_apart(work: str, n_cells: int, n_cases: int) -> dict[str, str]:
    """:func:`inputs` generated in a subprocess, so this process (the measuring run's parent) stays small."""
    proc = subprocess.run([sys.executable, __file__, "--inputs", json.dumps([work, n_cells, n_cases])],
                          capture_output=True, text=True, cwd=ROOT, check=True)
    return json.loads(proc.stdout.strip().splitlines()[-1])


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=int, default=30_000)
    ap.add_argument("--cases", type=int, default=5)
    ap.add_argument("--workers", type=int, default=None)
    ap.add_argument("--work", default="/tmp/plybridge-bench")
    ap.add_argument("--child", help=argparse.SUPPRESS)
    ap.add_argument("--inputs", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.child:
        child(*json.loads(args.child))
        return
    if args.inputs:
        print(json.dumps(inputs(*json.loads(args.inputs))))
        return
    t = time.perf_counter()
    paths = _inputs_apart(args.work, args.cells, args.cases)
    print(f"inputs ready in {time.perf_counter() - t:.1f} s: {args.cells} cells, {args.cases} cases, 8 plies, "
          "solver values at 16 of 24 ply points", flush=True)
    out = str(Path(args.work) / "compare-out.h5")
    small = _inputs_apart(args.work, 2000, args.cases)          # warm-up: caches filled, imports compiled
    subprocess.run([sys.executable, __file__, "--child", json.dumps([small, out, None])], capture_output=True,
                   cwd=ROOT, check=True)
    proc = subprocess.run([sys.executable, __file__, "--child", json.dumps([paths, out, args.workers])],
                          capture_output=True, text=True, cwd=ROOT, env={**os.environ})
    if proc.returncode:
        raise SystemExit(f"measurement failed:\n{proc.stderr[-3000:]}")
    r = json.loads(proc.stdout.strip().splitlines()[-1])
    workers = f" (largest worker process: {r['children_peak_mib']:.0f} MiB)" if args.workers else ""
    print(f"run_compare {r['seconds']:.1f} s, peak {r['peak_mib']:.0f} MiB{workers}, {r['verdict']}, "
          f"{r['compared_values']} values, {r['coverage']}")


if __name__ == "__main__":
    main()
