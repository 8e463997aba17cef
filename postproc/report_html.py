"""The fixed parts of the HTML report and its small builders: page, style, tables, cells.

Every string that reaches the page goes through :func:`esc`; no builder takes HTML from outside. The page
carries a Content-Security-Policy that allows no script at all (no script element, no inline event handler,
no ``javascript:`` URL), loads nothing from anywhere (pictures are data URIs) and allows only the one style
sheet below, named by its SHA-256.
"""

from __future__ import annotations

import base64
import hashlib
import html
from typing import Any, Sequence

from .numbers import sig

STYLE = """
:root { --ink: #1d232a; --muted: #5b6570; --rule: #c9ced4; --band: #eef2f4; --bad: #a4282a; --ok: #1f5f6e; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1240px; padding: 1.2rem 1.6rem 3rem; line-height: 1.4; font-size: 14px; }
header.top { border-bottom: 3px solid var(--ok); margin-bottom: 1rem; }
header.top h1 { font-size: 1.6rem; margin: 0.2rem 0; }
header.top p { margin: 0.2rem 0 0.6rem; color: var(--muted); }
.caution { border: 2px solid var(--bad); background: #fbeeee; padding: 0.7rem 1rem; margin: 1rem 0;
           font-weight: bold; }
h2 { font-size: 1.25rem; border-bottom: 1px solid var(--rule); padding-bottom: 0.2rem; margin-top: 2.2rem; }
h3 { font-size: 1.02rem; margin: 1.3rem 0 0.4rem; }
p.note { color: var(--muted); font-size: 12.5px; margin: 0.2rem 0 0.6rem; }
table { border-collapse: collapse; margin: 0.4rem 0 1rem; font-size: 13px; }
th, td { border: 1px solid var(--rule); padding: 0.2rem 0.55rem; text-align: left; vertical-align: top; }
th { background: var(--band); font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.fail { color: var(--bad); font-weight: bold; background: #fbeeee; }
td.pass { color: var(--ok); }
.headline { font-size: 1.3rem; }
.verdict-fail { color: var(--bad); font-weight: bold; }
figure { margin: 0.6rem 0 1.4rem; }
figure img { width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { color: var(--muted); font-size: 12.5px; }
details { margin: 0.2rem 0; }
details summary { cursor: pointer; color: var(--muted); font-size: 12.5px; }
code, .mono { font-family: "DejaVu Sans Mono", monospace; font-size: 12px; word-break: break-all; }
.layup { font-family: "DejaVu Sans Mono", monospace; }
.material { margin-bottom: 1.2rem; }
@media print {
  body { max-width: none; padding: 0; font-size: 11px; }
  * { background: none !important; box-shadow: none !important; }
  .caution { border: 2px solid black; }
  td.fail { text-decoration: underline; }
  section.page { page-break-before: always; break-before: page; }
  figure, table { page-break-inside: avoid; break-inside: avoid; }
  h2, h3 { page-break-after: avoid; break-after: avoid; }
}
"""

PAGE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{policy}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="plybridge {version}">
<title>{title}</title>
<style>{style}</style>
</head>
<body>
{body}
</body>
</html>
"""


def policy() -> str:
    """The page's Content-Security-Policy: nothing runs, nothing loads, only our style sheet applies."""
    digest = base64.b64encode(hashlib.sha256(STYLE.encode("utf-8")).digest()).decode("ascii")
    return ("default-src 'none'; script-src 'none'; script-src-attr 'none'; object-src 'none'; "
            f"img-src data:; style-src 'sha256-{digest}'; base-uri 'none'; form-action 'none'; frame-src 'none'")


def page(title: str, version: str, body: str) -> str:
    return PAGE.format(policy=policy(), version=esc(version), title=esc(title), style=STYLE, body=body)


def esc(value: Any) -> str:
    """HTML-escaped text of any value (quotes included)."""
    return html.escape(str(value), quote=True)


def data_uri(png: bytes) -> str:
    """``data:image/png;base64,…`` of PNG bytes."""
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


class Cell:
    """A table cell: escaped text, a number (four significant figures) or a margin (marked only if it fails)."""

    def __init__(self, value: Any, kind: str = "text"):
        self.value, self.kind = value, kind

    def html(self) -> str:
        v = self.value
        if self.kind == "text" or v is None or isinstance(v, str):
            return f"<td>{esc('—' if v is None else v)}</td>"
        text = esc(sig(v))
        if self.kind == "margin" and isinstance(v, (int, float)) and v < 0:
            return f'<td class="num fail" title="negative margin: fails">{text}</td>'
        return f'<td class="num">{text}</td>'


def num(value: Any) -> Cell:
    return Cell(value, "number")


def margin(value: Any) -> Cell:
    return Cell(value, "margin")


def table(headers: Sequence[str], rows: Sequence[Sequence[Any]], cls: str = "") -> str:
    """An HTML table; plain values are escaped text, :class:`Cell` values format themselves."""
    head = "".join(f"<th>{esc(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(c.html() if isinstance(c, Cell) else Cell(c).html() for c in row) + "</tr>"
                   for row in rows)
    attr = f' class="{esc(cls)}"' if cls else ""
    return f"<table{attr}><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"
