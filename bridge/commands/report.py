"""``plybridge report``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def report() -> None:
    raise click.UsageError("plybridge report is not available yet")
