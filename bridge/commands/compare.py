"""``plybridge compare``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def compare() -> None:
    raise click.UsageError("plybridge compare is not available yet")
