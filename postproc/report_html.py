"""The fixed parts of the HTML report: page skeleton and style sheet (kept as Python strings, no package data)."""

from __future__ import annotations

STYLE = """
:root { --ink: #1d232a; --muted: #5b6570; --rule: #c9ced4; --band: #eef2f4; --bad: #a4282a; --ok: #1f5f6e; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", Helvetica, Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1180px; padding: 1.2rem 1.6rem 3rem; line-height: 1.4; font-size: 14px; }
header.top { border-bottom: 3px solid var(--ok); margin-bottom: 1rem; }
header.top h1 { font-size: 1.6rem; margin: 0.2rem 0; }
header.top p { margin: 0.2rem 0 0.6rem; color: var(--muted); }
.caution { border: 2px solid var(--bad); background: #fbeeee; padding: 0.7rem 1rem; margin: 1rem 0;
           font-weight: bold; }
h2 { font-size: 1.2rem; border-bottom: 1px solid var(--rule); padding-bottom: 0.2rem; margin-top: 2rem; }
h3 { font-size: 1rem; margin: 1.2rem 0 0.4rem; }
table { border-collapse: collapse; margin: 0.4rem 0 1rem; font-size: 13px; }
th, td { border: 1px solid var(--rule); padding: 0.2rem 0.55rem; text-align: left; vertical-align: top; }
th { background: var(--band); }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
td.neg { color: var(--bad); font-weight: bold; }
.headline { font-size: 1.3rem; }
.maps { display: flex; flex-wrap: wrap; gap: 0.8rem; }
figure { margin: 0.4rem 0; }
figure img { max-width: 100%; border: 1px solid var(--rule); }
figcaption { color: var(--muted); font-size: 12px; }
.maps figure { flex: 1 1 360px; }
code, .mono { font-family: "DejaVu Sans Mono", monospace; font-size: 12px; word-break: break-all; }
@media print {
  body { max-width: none; padding: 0; font-size: 11px; }
  * { background: none !important; box-shadow: none !important; }
  .caution { border: 2px solid black; }
  section.page { page-break-before: always; break-before: page; }
  figure, table { page-break-inside: avoid; break-inside: avoid; }
  h2, h3 { page-break-after: avoid; break-after: avoid; }
}
"""

PAGE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
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
