"""``plybridge plot``: through-thickness profiles, polar moduli and failure envelopes (PNG or SVG)."""

from __future__ import annotations

import click

from bridge.commands.summary import echo_summary


@click.command(help="Plot from the results store RESULTS into FIG (.png or .svg, by extension). "
                    "profile: stresses and failure indices through the thickness of any cell (recovered again "
                    "from the run's inputs when not stored); polar: membrane and flexural moduli of a laminate "
                    "against direction; envelope: failure envelopes of a material in the sigma1-sigma2 and "
                    "sigma2-tau12 planes, with a cell's ply states. Prints what was plotted (key<TAB>value "
                    "lines, or --json).")
@click.argument("results", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Figure (.png or .svg).")
@click.option("--kind", type=click.Choice(["profile", "polar", "envelope"]), default="profile", show_default=True)
@click.option("--cell", type=int, help="Cell (0-based global index); profile default: the worst cell.")
@click.option("--case", help="Case name (profile; default: the cell's governing case).")
@click.option("--axis", type=click.Choice(["index", "z"]), default=None,
              help="Profile: 'index' gives every ply the same height (default for sandwich and stacks of more "
                   "than 12 plies), 'z' is true z.")
@click.option("--laminate", help="Laminate name (polar; default: the first).")
@click.option("--material", help="Material name (envelope; default: the first).")
@click.option("--criteria", help="Comma-separated criteria (envelope; default: those evaluated).")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as one JSON object.")
def plot(results, output, kind, cell, case, axis, laminate, material, criteria, as_json) -> None:
    from bridge.guards import guard_outputs
    from bridge.pictures.plots import plot_store

    guard_outputs({"results store": results}, {"-o": output})
    echo_summary(plot_store(results, output, kind=kind, cell=cell, case=case, laminate=laminate, material=material,
                            criteria=criteria, axis=axis), as_json)
