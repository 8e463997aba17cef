"""``plybridge report``: one self-contained HTML report of the results store (and a PDF of it)."""

from __future__ import annotations

import os

import click

from shells.defaults import CAUTION

from bridge.commands.summary import echo_summary


@click.command(help="Write the HTML report of the results store RESULTS to OUTPUT: minimum margins by zone, "
                    "laminate, case and criterion with what governs them, hot spots per zone, maps, the worst "
                    "cell through the thickness, materials, laminates, cases and settings with their units, the "
                    "verification summary and provenance, pictures embedded. Prints what was written "
                    f"(key<TAB>value lines, or --json). {CAUTION}")
@click.argument("results", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Report (.html).")
@click.option("--compare", "compare", type=click.Path(dir_okay=False),
              help="Comparison file written by plybridge compare -o X.h5; shown as a section.")
@click.option("--pdf", type=click.Path(dir_okay=False), help="Also print the report to this PDF (headless chromium).")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as one JSON object.")
def report(results, output, compare, pdf, as_json) -> None:
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    from bridge.guards import guard_outputs
    from bridge.pictures.report import write_report

    guard_outputs({"results store": results, "--compare": compare}, {"-o": output, "--pdf": pdf})
    echo_summary(write_report(results, output, compare, pdf), as_json)
