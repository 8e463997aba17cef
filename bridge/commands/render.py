"""``plybridge render``: a picture of a field of the results store (offscreen, PNG)."""

from __future__ import annotations

import json
import os

import click

from shells.errors import InputError

VIEW_NAMES = ("iso", "top", "front", "side", "+normal", "-normal", "worst")
FIELD_HELP = ("margin, strength-ratio, critical-ply, criterion, mode, case, or a ply component "
              "stress:s1|s2|s12|s13|s23, strain:e1|e2|e12 (needs recover --store plies)")


def parse_camera(text: str):
    """``"px,py,pz;fx,fy,fz;ux,uy,uz"`` → ((px, py, pz), (fx, fy, fz), (ux, uy, uz))."""
    try:
        parts = [tuple(float(v) for v in group.split(",")) for group in text.split(";")]
    except ValueError:
        parts = []
    if len(parts) != 3 or any(len(p) != 3 for p in parts):
        raise InputError(f"--camera {text!r}: give position;focal point;view-up as 'px,py,pz;fx,fy,fz;ux,uy,uz'")
    return tuple(parts)


def parse_size(text: str) -> tuple[int, int]:
    """``"WxH"`` → (W, H), each 16 … 8192 pixels."""
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise InputError(f"--size {text!r}: give WIDTHxHEIGHT in pixels, e.g. 1200x900") from None
    if not (16 <= w <= 8192 and 16 <= h <= 8192):
        raise InputError(f"--size {text!r}: width and height must lie in 16 … 8192 pixels")
    return w, h


@click.command(help="Render a field of the results store RESULTS as a PNG picture (offscreen). Margins use a "
                    "diverging map centred on zero, ratios a sequential map, codes a legend of names; cells "
                    "without a value are grey; the worst cell is marked. Prints what was drawn as JSON.")
@click.argument("results", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Picture (.png).")
@click.option("--field", default="margin", show_default=True, help=FIELD_HELP)
@click.option("--ply", default="envelope", show_default=True,
              help="Ply number (1 = bottom) or 'envelope' (the critical ply of each cell).")
@click.option("--case", default="envelope", show_default=True, help="Case name or 'envelope' (governing case).")
@click.option("--view", "views", multiple=True, type=click.Choice(VIEW_NAMES),
              help="View; repeat for several views side by side (default iso); worst: facing the worst cell along its normal.")
@click.option("--camera", "cameras", multiple=True, help="Explicit camera 'px,py,pz;fx,fy,fz;ux,uy,uz' "
              "(position; focal point; view-up); repeatable, drawn after the --view views.")
@click.option("--size", default="1200x900", show_default=True, help="Picture size WIDTHxHEIGHT in pixels.")
@click.option("--cell-data", type=click.Path(dir_okay=False), help="Also write the field as cell data (.vtu).")
def render(results, output, field, ply, case, views, cameras, size, cell_data) -> None:
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    from bridge.pictures.render import render_store

    from bridge.guards import guard_outputs

    chosen = list(views) + [parse_camera(c) for c in cameras]
    if cell_data and not cell_data.lower().endswith(".vtu"):
        raise InputError(f"--cell-data {cell_data}: write a .vtu file")
    guard_outputs({"results store": results}, {"-o": output, "--cell-data": cell_data})
    drawn = render_store(results, output, field=field, ply=ply, case=case, views=tuple(chosen or ["iso"]),
                         size=parse_size(size), cell_data=cell_data)
    click.echo(json.dumps(drawn))
