"""``plybridge demo``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def demo() -> None:
    raise click.UsageError("plybridge demo is not available yet")
