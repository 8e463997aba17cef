"""``plybridge assign``: zones, orientation and section fields onto a mesh, for the solver."""

from __future__ import annotations

from pathlib import Path

import click

from shells.errors import InputError, printable


def sections_path(output: str | Path) -> Path:
    """The section table written beside a mesh output, named from its full name: ``OUT.vtu.sections.json``."""
    out = Path(output)
    return out.with_name(out.name + ".sections.json")


def run_assign(definition: str, mesh: str, output: str) -> dict:
    """Assign and write ``output`` and its section table; returns what was written (counts per zone)."""
    from bridge.atomic import atomic_path
    from bridge.definition.loader import load_definition
    from bridge.guards import guard_outputs
    from bridge.mesh.checks import mesh_notes
    from bridge.mesh.formats import read_mesh, write_mesh
    from bridge.model.build import build_model, describe
    from bridge.model.fields import section_fields, section_table_json

    if not output.lower().endswith((".vtu", ".xdmf")):
        raise InputError(f"--output {output}: write a .vtu or .xdmf file")
    guard_outputs({"definition": definition, "mesh": mesh},
                  {"-o": output, "section table": sections_path(output)})
    defn = load_definition(definition)
    m = read_mesh(mesh)
    model = build_model(defn, m)
    fields = section_fields(model)
    with atomic_path(sections_path(output)) as tmp:  # both files or neither: the table is renamed last
        tmp.write_text(section_table_json(model), encoding="utf-8")
        write_mesh(output, m, fields)
    for note in (*m.notes, *mesh_notes(m)):
        click.echo(f"note: {printable(note)}", err=True)
    counts = ", ".join(f"{k}: {v}" for k, v in describe(model).items())
    click.echo(printable(f"assigned {model.n_cells} cells ({counts}); wrote {output} and {sections_path(output)}"),
               err=True)
    return {"output": output, "sections_table": str(sections_path(output)), "cells": model.n_cells,
            "sections": len(model.sections), "zone": [[name, count] for name, count in describe(model).items()]}


@click.command(help="Assign laminates to the zones of MESH, orient them and write per-cell section fields "
                    "(element frame; docs/fields.md) to OUTPUT (.vtu or .xdmf), with the section table in "
                    "laminate axes beside it as OUTPUT.sections.json (e.g. assigned.vtu.sections.json). Prints "
                    "what was written (key<TAB>value lines, or --json).")
@click.argument("definition", type=click.Path(dir_okay=False))
@click.argument("mesh", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="Output mesh (.vtu, .xdmf).")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as one JSON object.")
def assign(definition: str, mesh: str, output: str, as_json: bool) -> None:
    from bridge.commands.summary import echo_summary

    echo_summary(run_assign(definition, mesh, output), as_json)
