"""``plybridge recover``: ply strains, stresses, strength ratios and margins over every cell and case."""

from __future__ import annotations

import json
from pathlib import Path

import click

from shells.errors import InputError, printable


def sidecar(output: str | Path, suffix: str) -> Path:
    """A file written beside an output, named from the output's full name: ``R.h5`` → ``R.h5.hotspots.csv``."""
    out = Path(output)
    return out.with_name(out.name + suffix)


def _progress(label: str = "recover"):
    """A progress printer for stderr: ``label: done/total cells (pct%)`` every 5 %."""
    state = {"last": -1}

    def report(done: int, total: int) -> None:
        pct = int(100 * done / max(total, 1))
        if pct // 5 != state["last"] // 5 or done == total:
            state["last"] = pct
            click.echo(f"\r{label}: {done}/{total} cells ({pct}%)", err=True, nl=done == total)

    return report


def summary_lines(summary: dict, units: str) -> str:
    """The short key<TAB>value summary printed on stdout."""
    w = summary["worst"] or {}
    rows = [("min_margin", f"{w['min_margin']:.6g}" if w else "none"), ("cell", w.get("cell", "")),
            ("ply", w.get("ply", "")), ("case", w.get("case", "")), ("criterion", w.get("criterion", "")),
            ("mode", w.get("mode", "")), ("point", w.get("point", "")),
            ("strength_ratio", f"{w['strength_ratio']:.6g}" if w else ""),
            ("flagged_cells", summary["flagged_cells"]), ("cell_order", summary.get("cell_order", "")),
            ("units", units)]
    zone = next((z for z, v in summary["zones"].items() if w and v["cell"] == w.get("cell")), "")
    rows.insert(2, ("zone", zone))
    return "".join(f"{k}\t{printable(str(v))}\n" for k, v in rows)


@click.command(help="Recover every ply of every cell and case of MESH from RESULTANTS (HDF5 /resultants, "
                    "an XDMF series, or VTU files) and write the results store OUTPUT (docs/results.md). "
                    "Prints a short summary on stdout; progress on stderr.")
@click.argument("definition", type=click.Path(dir_okay=False))
@click.argument("mesh", type=click.Path(dir_okay=False))
@click.argument("resultants", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Results store (.h5).")
@click.option("--store", "store_kind", type=click.Choice(["envelope", "plies"]), default=None,
              help="'plies' also stores every ply stress and strain of every case (default: envelope; "
                   "with --resume, as the interrupted run).")
@click.option("--view", type=click.Path(dir_okay=False),
              help="Also write the results as named cell arrays of the mesh (.vtu/.xdmf) for a VTK viewer.")
@click.option("--view-fields", default=None, metavar="LIST",
              help="Comma-separated fields for --view (docs/fields.md): per cell min_margin, critical_ply, "
                   "strength_ratio, case, criterion, mode, point, flagged, zone; per ply margin, strength_ratio, "
                   "ply_case, ply_criterion, ply_mode, ply_point; ply components such as sigma1@top, tau12, eps1 "
                   "(need --store plies). Default: the per-cell fields and margin.")
@click.option("--hot-spots", "hot_path", type=click.Path(dir_okay=False),
              help="Hot-spot CSV (default: OUTPUT.hotspots.csv beside the store).")
@click.option("--json", "as_json", is_flag=True, help="Print the full summary as JSON instead.")
@click.option("--quiet", is_flag=True, help="No progress on stderr (notes and warnings are still printed).")
@click.option("--workers", type=int, default=None,
              help="Compute on a local cluster of N single-threaded worker processes (dask.distributed).")
@click.option("--scheduler", default=None, metavar="ADDRESS",
              help="Compute on a running dask cluster, e.g. tcp://10.0.0.5:8786 (docs/scale.md).")
@click.option("--block-cells", type=int, default=None,
              help="Cells per block (default: about 32 MiB of block arrays, a multiple of the store chunk; "
                   "with --resume, as the interrupted run).")
@click.option("--resume", is_flag=True,
              help="Continue an interrupted run of OUTPUT with the same inputs and options (remembered); finished "
                   "blocks are checked against their checksums and kept.")
def recover(definition, mesh, resultants, output, store_kind, view, view_fields, hot_path, as_json, quiet, workers,
            scheduler, block_cells, resume) -> None:
    from bridge.atomic import write_text
    from bridge.guards import guard_outputs
    from bridge.recover.run import run_recover
    from bridge.results.partial import partial_paths
    from bridge.results.view import needs_plies, parse_fields, write_view
    from postproc.summary import hot_spots_csv

    if view and not view.lower().endswith((".vtu", ".xdmf")):
        raise InputError(f"--view {view}: write a .vtu or .xdmf file")
    if view_fields is not None and not view:
        raise InputError("--view-fields needs --view OUT.vtu (the file the fields go to)")
    entries = parse_fields(view_fields)
    if needs_plies(entries) and store_kind != "plies" and not resume:
        raise InputError("--view-fields: ply components need the ply states; add --store plies")
    hot_path = hot_path or sidecar(output, ".hotspots.csv")
    guard_outputs({"definition": definition, "mesh": mesh, "resultants": list(resultants)},
                  {"-o": output, "--hot-spots": hot_path, "--view": view}, {"-o": partial_paths(output)})

    def note(text: str) -> None:
        click.echo(f"recover: {printable(text)}", err=True)

    try:
        summary = run_recover(definition, mesh, list(resultants), output,
                              None if store_kind is None else store_kind == "plies",
                              None if quiet else _progress(), workers=workers, scheduler=scheduler,
                              block_cells=block_cells, resume=resume, note=note)
    except KeyboardInterrupt:
        note("interrupted; finished blocks are kept beside the output: run again with --resume to finish")
        raise
    write_text(hot_path, hot_spots_csv(summary))
    if view:
        write_view(output, view, entries)
    from bridge.results.store import StoreReader

    with StoreReader(output) as st:
        units = st.run.units
    if as_json:
        click.echo(json.dumps(summary, indent=1))
    else:
        click.echo(summary_lines(summary, units), nl=False)
    for text in summary.get("notes", []):
        note(f"note: {text}")
    if summary["flagged_cells"]:
        click.echo(f"warning: {summary['flagged_cells']} cells had NaN or infinite resultants in some case; "
                   f"they are flagged in /cells/flagged (e.g. {summary['flagged_examples'][:5]})", err=True)
