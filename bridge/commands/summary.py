"""The machine-readable summary every command prints on stdout: ``key<TAB>value`` lines, or one JSON object."""

from __future__ import annotations

import json
from typing import Any, Mapping

import click

from shells.errors import printable


def _text(value: Any) -> str:
    """One field of a line: no tab or line break can forge another field or line, no control character reaches
    the terminal (written as an escape)."""
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.6g}"
    return printable(" ".join(str(value).split()))


def summary_text(summary: Mapping[str, Any]) -> str:
    """``key<TAB>value`` lines; a list gives one line per item, a list item that is a list gives tab-separated
    values (``legend<TAB>label<TAB>#rrggbb``)."""
    lines = []
    for key, value in summary.items():
        items = value if isinstance(value, (list, tuple)) else [value]
        for item in items:
            fields = item if isinstance(item, (list, tuple)) else [item]
            lines.append("\t".join([key, *(_text(f) for f in fields)]))
    return "".join(line + "\n" for line in lines)


def echo_summary(summary: Mapping[str, Any], as_json: bool) -> None:
    """Print ``summary`` on stdout, as JSON with ``as_json``, else as ``key<TAB>value`` lines."""
    if as_json:
        click.echo(json.dumps(summary, indent=1, ensure_ascii=False))
    else:
        click.echo(summary_text(summary), nl=False)
