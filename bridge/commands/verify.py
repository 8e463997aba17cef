"""``plybridge verify``: placeholder until its module is written."""

from __future__ import annotations

import click


@click.command(help="(not yet available)")
def verify() -> None:
    raise click.UsageError("plybridge verify is not available yet")
