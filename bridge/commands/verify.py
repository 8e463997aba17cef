"""``plybridge verify``: run the built-in published cases (shells.published) and print the table."""

from __future__ import annotations

import json

import click


@click.command(help="Check plybridge's mechanics against published values (lamina stiffness, engineering "
                    "constants, strength ratios, quasi-isotropic constants, the Pagano plate thin limit, "
                    "transverse shear factors, coupled stacks, thermal resultants and held-thermal ratios, "
                    "isotropic layers, sandwich core shear and wrinkling, a definition in lbf-in, and transverse "
                    "shear from the moment field through the recover path). Prints case, source, quantity, "
                    "expected, computed, relative error and pass, tab-separated with a header line. Exit code 0 "
                    "only when every case passes.")
@click.option("--json", "as_json", is_flag=True, help="Print the results as a JSON list instead.")
def verify(as_json) -> None:
    from bridge.recover.published import all_cases
    from shells.published import check

    rows = [check(case) for case in all_cases()]
    if as_json:
        click.echo(json.dumps(rows, indent=1))
    else:
        head = ("case", "source", "quantity", "expected", "computed", "rel_error", "pass")
        cells = [head] + [(r["case"], r["source"], r["quantity"], f"{r['expected']:.6g}", f"{r['computed']:.6g}",
                           f"{r['relative_error']:.2e}", "yes" if r["pass"] else "NO") for r in rows]
        for c in cells:   # tab-separated: one header line, one line per case
            click.echo("\t".join(" ".join(str(v).split()) for v in c))
        failed = sum(not r["pass"] for r in rows)
        click.echo(f"{len(rows) - failed} of {len(rows)} published cases pass", err=True)
    raise click.exceptions.Exit(0 if all(r["pass"] for r in rows) else 1)
