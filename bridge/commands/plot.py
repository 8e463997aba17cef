"""``plybridge plot``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def plot() -> None:
    raise click.UsageError("plybridge plot is not available yet")
