"""``plybridge compare``: cross-check a solver's ply stresses or strains against plybridge's own recovery."""

from __future__ import annotations

import json

import click

from shells.defaults import CAUTION


@click.command(help="Recover MESH from RESULTANTS independently and compare every ply, point, component, cell "
                    "and case with the solver's ply values SOLVER_PLIES (mapped by the [solver_plies] table of "
                    "DEFINITION; docs/compare.md), block by block. States the coverage (ply points checked of the "
                    "total, per zone). On a failure, tests the usual convention errors zone by zone "
                    "and names those that explain it. Exit code 0: within tolerance; 1: the comparison failed; "
                    "2: bad input.\n\n" + CAUTION)
@click.argument("definition", type=click.Path(dir_okay=False))
@click.argument("mesh", type=click.Path(dir_okay=False))
@click.argument("resultants", type=click.Path(dir_okay=False))
@click.argument("solver_plies", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Comparison file (.h5).")
@click.option("--tolerance", type=float, default=1e-3, show_default=True,
              help="Largest relative difference accepted (relative to each ply component's value scale).")
@click.option("--view", type=click.Path(dir_okay=False), help="Also write the per-cell discrepancy (.vtu/.xdmf).")
@click.option("--map", "map_png", type=click.Path(dir_okay=False), help="Also render the discrepancy as a PNG.")
@click.option("--json", "as_json", is_flag=True, help="Print the full summary as JSON instead.")
@click.option("--resultants", "more", multiple=True, type=click.Path(dir_okay=False),
              help="Another resultants file (repeatable); files are merged by case name.")
@click.option("--workers", type=int, default=None,
              help="Compute on a local cluster of N single-threaded worker processes (dask.distributed).")
@click.option("--scheduler", default=None, metavar="ADDRESS",
              help="Compute on a running dask cluster, e.g. tcp://10.0.0.5:8786 (docs/scale.md).")
@click.option("--block-cells", type=int, default=None, help="Cells per block (default: about 16 MiB of values).")
@click.option("--quiet", is_flag=True, help="No progress on stderr.")
def compare(definition, mesh, resultants, solver_plies, output, tolerance, view, map_png, as_json, more,
            workers, scheduler, block_cells, quiet):
    from bridge.commands.recover import _progress
    from bridge.compare.run import run_compare, verdict_lines
    from bridge.guards import guard_outputs

    guard_outputs({"definition": definition, "mesh": mesh, "resultants": [resultants, *more],
                   "solver ply values": list(solver_plies)},
                  {"-o": output, "--view": view, "--map": map_png})
    printers = {}

    def progress(stage: str, done: int, total: int) -> None:
        printers.setdefault(stage, _progress(f"compare ({stage})"))(done, total)

    summary = run_compare(definition, mesh, [resultants, *more], list(solver_plies), output, tolerance, view,
                          map_png, workers=workers, scheduler=scheduler, block_cells=block_cells,
                          progress=None if quiet else progress)
    from bridge.cli import safe_lines

    click.echo(json.dumps(summary, indent=1) if as_json else safe_lines(verdict_lines(summary)), nl=as_json)
    raise click.exceptions.Exit(0 if summary["verdict"] == "pass" else 1)
