"""``plybridge section``: section stiffness of the laminates of a definition."""

from __future__ import annotations

import json

import click


@click.command(help="Section properties (ABD, H, thermal resultants, constants, flags) of the laminates "
                    "of DEFINITION, in laminate axes and the definition's units. Prints key<TAB>value lines "
                    "(quantity, laminate, values at full precision; docs/fields.md), or one JSON object "
                    "(--json), or readable tables (--table).")
@click.argument("definition", type=click.Path(dir_okay=False))
@click.option("--laminate", "names", multiple=True, metavar="NAME", help="Only this laminate (repeatable).")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object on stdout.")
@click.option("--table", "as_table", is_flag=True, help="Print readable tables instead of key<TAB>value lines.")
@click.option("-o", "--output", type=click.Path(dir_okay=False), help="Write to this file instead of stdout.")
def section(definition: str, names: tuple[str, ...], as_json: bool, as_table: bool, output: str | None) -> None:
    from bridge.atomic import write_text
    from bridge.definition.loader import load_definition
    from bridge.model.sections import build_sections, select_laminates
    from bridge.guards import guard_outputs
    from bridge.model.section_text import format_sections, section_lines

    if output:
        guard_outputs({"definition": definition}, {"-o": output})
    defn = load_definition(definition)
    chosen = select_laminates(defn, names)
    sections = build_sections(defn, chosen)
    summaries = {name: sec.summary() for name, sec in sections.items()}
    if as_json and as_table:
        raise click.UsageError("give --json or --table, not both")
    if as_json:
        text = json.dumps({"units": defn.units.name, "laminates": summaries}, indent=2) + "\n"
    elif as_table:
        text = format_sections(summaries, defn.units)
    else:
        text = section_lines(summaries, defn.units)
    if output:
        write_text(output, text)
    else:
        from bridge.cli import safe_lines

        click.echo(safe_lines(text), nl=False)
