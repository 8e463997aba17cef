"""``plybridge assign``: zones, orientation and section fields onto a mesh, for the solver."""

from __future__ import annotations

from pathlib import Path

import click

from shells.errors import InputError


def sections_path(output: str | Path) -> Path:
    """The section table written beside a mesh output: ``OUT.sections.json``."""
    out = Path(output)
    return out.with_name(out.stem + ".sections.json")


@click.command(help="Assign laminates to the zones of MESH, orient them and write per-cell section fields "
                    "(element frame; docs/fields.md) to OUTPUT (.vtu or .xdmf), with the section table in "
                    "laminate axes beside it as OUTPUT-stem.sections.json.")
@click.argument("definition", type=click.Path(dir_okay=False))
@click.argument("mesh", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Output mesh (.vtu, .xdmf).")
def assign(definition: str, mesh: str, output: str) -> None:
    from bridge.atomic import write_text
    from bridge.definition.loader import load_definition
    from bridge.mesh.formats import read_mesh, write_mesh
    from bridge.model.build import build_model, describe
    from bridge.model.fields import section_fields, section_table_json

    if not output.lower().endswith((".vtu", ".xdmf")):
        raise InputError(f"--output {output}: write a .vtu or .xdmf file")
    defn = load_definition(definition)
    m = read_mesh(mesh)
    model = build_model(defn, m)
    fields = section_fields(model)
    write_text(sections_path(output), section_table_json(model))
    write_mesh(output, m, fields)
    for note in m.notes:
        click.echo(f"note: {note}", err=True)
    counts = ", ".join(f"{k}: {v}" for k, v in describe(model).items())
    click.echo(f"assigned {model.n_cells} cells ({counts}); wrote {output} and {sections_path(output)}", err=True)
