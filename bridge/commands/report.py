"""``plybridge report``: one self-contained HTML report of the results store."""

from __future__ import annotations

import os
from pathlib import Path

import click

from shells.defaults import CAUTION


@click.command(help="Write the HTML report of the results store RESULTS to OUTPUT: minimum margins by zone, "
                    "laminate, case and criterion, hot spots, maps, the worst cell through the thickness, inputs "
                    f"and provenance, pictures embedded. {CAUTION}")
@click.argument("results", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Report (.html).")
@click.option("--compare", "compare", type=click.Path(dir_okay=False),
              help="HTML fragment written by plybridge compare, inserted as a section.")
def report(results, output, compare) -> None:
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    from bridge.guards import guard_outputs
    from bridge.pictures.report import write_report
    from shells.errors import printable

    guard_outputs({"results store": results, "--compare": compare}, {"-o": output})
    fragment = Path(compare).read_text(encoding="utf-8") if compare else None
    write_report(results, output, fragment)
    click.echo(printable(output))
