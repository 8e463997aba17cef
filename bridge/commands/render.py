"""``plybridge render``: a picture of a field of the results store (offscreen, PNG)."""

from __future__ import annotations

import os

import click

from shells.errors import InputError

from postproc.render import VIEWS as VIEW_NAMES

from bridge.commands.summary import echo_summary

FIELD_HELP = ("margin, strength-ratio, critical-ply, criterion, mode, case, first-ply-factor, last-ply-factor "
              "(progressive analysis), misalignment (the governing turn), or a ply component (needs recover "
              "--store plies): sigma1 sigma2 tau12 tau13 tau23, eps1 eps2 gamma12 gamma13 gamma23 (material "
              "axes), sigma_x sigma_y tau_xy tau_xz tau_yz, eps_x eps_y gamma_xy gamma_xz gamma_yz (element axes)")


def parse_camera(text: str):
    """``"px,py,pz;fx,fy,fz;ux,uy,uz"`` → ((px, py, pz), (fx, fy, fz), (ux, uy, uz))."""
    try:
        parts = [tuple(float(v) for v in group.split(",")) for group in text.split(";")]
    except ValueError:
        parts = []
    if len(parts) != 3 or any(len(p) != 3 for p in parts):
        raise InputError(f"--camera {text!r}: give position;focal point;view-up as 'px,py,pz;fx,fy,fz;ux,uy,uz'")
    return tuple(parts)


def parse_size(text: str | None) -> tuple[int, int] | None:
    """``"WxH"`` → (W, H), each 16 … 8192 pixels; None or ``auto``: fitted to the model."""
    if text is None or text == "auto":
        return None
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise InputError(f"--size {text!r}: give WIDTHxHEIGHT in pixels, e.g. 1200x900, or auto") from None
    if not (16 <= w <= 8192 and 16 <= h <= 8192):
        raise InputError(f"--size {text!r}: width and height must lie in 16 … 8192 pixels")
    return w, h


@click.command(help="Render a field of the results store RESULTS as a PNG picture (offscreen). Margins use a "
                    "diverging map centred on zero, ratios a sequential map, codes a grouped legend of names; "
                    "cells without a value are grey; the worst cell is ringed where it is visible. Prints what "
                    "was drawn (key<TAB>value lines, or --json).")
@click.argument("results", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Picture (.png).")
@click.option("--field", default="margin", show_default=True, help=FIELD_HELP)
@click.option("--ply", default="envelope", show_default=True,
              help="Ply number (1 = bottom) or 'envelope' (the critical ply of each cell).")
@click.option("--case", default="envelope", show_default=True, help="Case name or 'envelope' (governing case).")
@click.option("--view", "views", multiple=True, type=click.Choice(VIEW_NAMES),
              help="View; repeat for several views (default iso). worst: the worst cell and its neighbourhood, "
                   "seen along its normal.")
@click.option("--camera", "cameras", multiple=True, help="Explicit camera 'px,py,pz;fx,fy,fz;ux,uy,uz' "
              "(position; focal point; view-up; perspective); repeatable, drawn after the --view views.")
@click.option("--size", default=None, help="Picture size WIDTHxHEIGHT in pixels (default: 1600 wide, as high as "
              "the model needs).")
@click.option("--cell-data", type=click.Path(dir_okay=False), help="Also write the field as cell data (.vtu).")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as one JSON object.")
def render(results, output, field, ply, case, views, cameras, size, cell_data, as_json) -> None:
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    from bridge.guards import guard_outputs
    from bridge.pictures.render import render_store

    chosen = list(views) + [parse_camera(c) for c in cameras]
    if cell_data and not cell_data.lower().endswith(".vtu"):
        raise InputError(f"--cell-data {cell_data}: write a .vtu file")
    guard_outputs({"results store": results}, {"-o": output, "--cell-data": cell_data})
    drawn = render_store(results, output, field=field, ply=ply, case=case, views=tuple(chosen or ["iso"]),
                         size=parse_size(size), cell_data=cell_data)
    echo_summary(drawn, as_json)
