"""``plybridge render``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def render() -> None:
    raise click.UsageError("plybridge render is not available yet")
