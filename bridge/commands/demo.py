"""``plybridge demo``: the whole chain on the bundled battery-bay scenario (docs/demo.md)."""

from __future__ import annotations

import os
import time
from pathlib import Path

import click

from shells.defaults import CAUTION

#: Files written into the output folder besides the inputs of bridge.demo.write_inputs.
ASSIGNED_NAME = "bay-assigned.vtu"
STORE_NAME = "results.h5"
MAPS = (("margin", "margin.png"), ("critical-ply", "critical-ply.png"))
REPORT_NAME = "report.html"


def _note(start: float, text: str) -> None:
    click.echo(f"demo [{time.perf_counter() - start:5.1f} s]: {text}", err=True)


@click.command(help="Run the bundled demo: a battery bay of a small electric aircraft (sandwich floor and lid, "
                    "monolithic walls, four load cases; invented data, docs/demo.md). Writes the definition, mesh "
                    "and resultants into OUT, then runs assign, recover, render and report there. Prints the "
                    "paths written and the worst margin (key<TAB>value lines, or --json); progress on stderr. " + CAUTION)
@click.option("--out", "out_dir", default="demo-out", show_default=True, type=click.Path(file_okay=False),
              help="Output folder (created if missing; existing demo files are replaced).")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as one JSON object.")
def demo(out_dir: str, as_json: bool) -> None:
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    from bridge.atomic import write_text
    from bridge.demo import write_inputs
    from bridge.recover.run import run_recover
    from postproc.summary import hot_spots_csv

    from bridge.commands.assign import run_assign
    from bridge.commands.recover import _progress, sidecar
    from bridge.commands.summary import echo_summary

    start = time.perf_counter()
    out = Path(out_dir)
    inputs = write_inputs(out)
    _note(start, f"wrote {inputs.definition}, {inputs.mesh} and {inputs.resultants}")
    run_assign(str(inputs.definition), str(inputs.mesh), str(out / ASSIGNED_NAME))
    _note(start, f"wrote {out / ASSIGNED_NAME}")
    store = out / STORE_NAME
    summary = run_recover(str(inputs.definition), str(inputs.mesh), [str(inputs.resultants)], str(store),
                          store_plies=False, progress=_progress())
    write_text(sidecar(store, ".hotspots.csv"), hot_spots_csv(summary))
    w = summary["worst"] or {}
    _note(start, f"wrote {store}; worst margin {w.get('min_margin', float('nan')):.3g} in cell {w.get('cell')} "
                 f"(ply {w.get('ply')}, case {w.get('case')}, {w.get('criterion')})")

    from bridge.pictures.render import render_store
    from bridge.pictures.report import write_report

    for field, name in MAPS:
        render_store(store, out / name, field=field, views=("iso", "worst"))
        _note(start, f"wrote {out / name}")
    report = out / REPORT_NAME
    write_report(store, report)
    _note(start, f"wrote {report}")
    # One key per map (a key given once reads into a dict): margin_map, critical_ply_map.
    maps = {f"{field.replace('-', '_')}_map": str(out / name) for field, name in MAPS}
    echo_summary({"report": str(report), "store": str(store), **maps,
                  "min_margin": w.get("min_margin"), "cell": w.get("cell"), "case": w.get("case")}, as_json)
