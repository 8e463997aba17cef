"""The self-contained HTML report of a recovery run.

:func:`build_report` takes plain data (the store's metadata as dicts and lists)
and pictures as PNG bytes, and returns one HTML document with the pictures
embedded as base64 data URIs. Every string that came from an input is escaped
with :func:`html.escape`; the only HTML passed through is a comparison fragment
written by plybridge itself (checked for scripts by :func:`check_fragment`).
"""

from __future__ import annotations

import base64
import html
import json
import re
from dataclasses import dataclass, field
from typing import Any, Mapping, Sequence

from .report_html import PAGE, STYLE

CAUTION = ("Results support, and never replace, review by a qualified engineer under the applicable "
           "regulations and local codes.")


@dataclass(frozen=True)
class ReportInputs:
    """Everything the report shows (plain data; strings are escaped when written).

    Attributes
    ----------
    title, units : str
        Run title and force-length system.
    summary : dict
        The store's ``summary`` attribute (worst, zones, laminates, cases, criteria, hot_spots, flagged_cells).
    materials, sections, cases, analysis, inputs : dict or list
        The store's metadata of the same names (``cases`` is ``cases_detail``).
    zones : list of (zone, laminate)
    provenance : dict
        tool, tool_version, created, settings…
    figures : list of (caption, PNG bytes)
        Maps and plots, in order.
    compare_fragment : str or None
        Trusted HTML from the compare command.
    """

    title: str
    units: str
    summary: Mapping[str, Any]
    materials: Mapping[str, Any]
    sections: Sequence[Mapping[str, Any]]
    cases: Sequence[Mapping[str, Any]]
    analysis: Mapping[str, Any]
    inputs: Mapping[str, Any]
    zones: Sequence[tuple[str, str]]
    provenance: Mapping[str, Any]
    figures: Sequence[tuple[str, bytes]] = field(default_factory=tuple)
    compare_fragment: str | None = None


def esc(value: Any) -> str:
    """HTML-escaped text of any value (quotes included)."""
    return html.escape(str(value), quote=True)


def check_fragment(fragment: str, source: str = "compare fragment") -> str:
    """Return ``fragment`` if it holds no script (``<script``, ``javascript:``, ``on…=`` handlers); else raise.

    Raises
    ------
    ValueError
        With a message naming ``source``.
    """
    if re.search(r"<\s*script|javascript\s*:|\son[a-z]+\s*=", fragment, flags=re.IGNORECASE):
        raise ValueError(f"{source}: contains a script or an event handler; give a fragment written by "
                         "plybridge compare")
    return fragment


def data_uri(png: bytes) -> str:
    """``data:image/png;base64,…`` of PNG bytes."""
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def _num(value: Any, fmt: str = ".4g") -> str:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return f'<td>{esc(value)}</td>'
    cls = "num neg" if v < 0 else "num"
    return f'<td class="{cls}">{format(v, fmt)}</td>'


def table(headers: Sequence[str], rows: Sequence[Sequence[Any]], numeric: Sequence[int] = (), cls: str = "") -> str:
    """An HTML table; cells in columns ``numeric`` are formatted as numbers, every cell escaped."""
    head = "".join(f"<th>{esc(h)}</th>" for h in headers)
    body = []
    for row in rows:
        cells = "".join(_num(v) if i in numeric else f"<td>{esc(v)}</td>" for i, v in enumerate(row))
        body.append(f"<tr>{cells}</tr>")
    return f'<table class="{esc(cls)}"><thead><tr>{head}</tr></thead><tbody>{"".join(body)}</tbody></table>'


def _minima(title: str, key: str, entries: Mapping[str, Mapping[str, Any]], extra: str | None = None) -> str:
    headers = [key] + ([extra] if extra else []) + ["min margin", "cell"]
    rows = [[name] + ([e.get(extra, "")] if extra else []) + [e.get("min_margin"), e.get("cell")]
            for name, e in entries.items()]
    return f"<h3>{esc(title)}</h3>" + table(headers, rows, numeric=(len(headers) - 2,))


def _summary(r: ReportInputs) -> str:
    s = r.summary
    w = s.get("worst") or {}
    head = ('<p class="headline">Minimum margin of safety: <strong>'
            + (f"{float(w['min_margin']):.4g}" if w else "none") + "</strong>"
            + (f" at cell {esc(w.get('cell'))}, ply {esc(w.get('ply'))}, case {esc(w.get('case'))}, "
               f"{esc(w.get('criterion'))} ({esc(w.get('mode'))}), {esc(w.get('point'))} of the ply"
               if w else "") + "</p>")
    parts = ['<section id="summary"><h2>Summary</h2>', head,
             table(["quantity", "value"], [["minimum margin", w.get("min_margin", "")],
                                           ["strength ratio", w.get("strength_ratio", "")],
                                           ["flagged cells", s.get("flagged_cells", 0)]],
                   numeric=(1,), cls="summary"),
             _minima("By zone", "zone", s.get("zones", {}), "laminate"),
             _minima("By laminate", "laminate", s.get("laminates", {})),
             _minima("By case", "case", s.get("cases", {})),
             _minima("By criterion", "criterion", s.get("criteria", {}))]
    if s.get("flagged_cells"):
        parts.append(f"<p>{esc(s['flagged_cells'])} cells had NaN or infinite resultants in some case; those "
                     f"cases were skipped there (e.g. cells {esc(s.get('flagged_examples', [])[:10])}).</p>")
    return "".join(parts) + "</section>"


def _hot_spots(r: ReportInputs) -> str:
    keys = ("cell", "min_margin", "ply", "strength_ratio", "case", "point", "criterion", "mode")
    rows = [[i + 1] + [h.get(k, "") for k in keys] for i, h in enumerate(r.summary.get("hot_spots", []))]
    return ('<section id="hotspots"><h2>Hot spots</h2>'
            + table(["rank", *keys], rows, numeric=(2, 4), cls="hotspots") + "</section>")


def _figures(r: ReportInputs) -> str:
    figs = "".join(f'<figure><img alt="{esc(cap)}" src="{data_uri(png)}"><figcaption>{esc(cap)}</figcaption>'
                   f"</figure>" for cap, png in r.figures)
    return f'<section id="pictures" class="page"><h2>Maps and through-thickness</h2><div class="maps">{figs}</div>' \
           "</section>"


def _json_cell(value: Any) -> str:
    return value if isinstance(value, str) else json.dumps(value)


def _inputs(r: ReportInputs) -> str:
    mats = [[name, m.get("kind", ""), ", ".join(f"{k} = {_json_cell(v)}" for k, v in m.items() if k != "kind")]
            for name, m in r.materials.items()]
    secs = []
    for s in r.sections:
        plies = "; ".join(f"{i + 1}: {p['material']} {p['angle']:g}° × {p['thickness']:g}"
                          for i, p in enumerate(s.get("plies", [])))
        secs.append([s.get("id"), s.get("laminate"), s.get("thickness"), s.get("offset"), plies])
    cases = [[c.get("name"), c.get("kind"), c.get("delta_T"), c.get("pressure"), c.get("factor_of_safety")]
             for c in r.cases]
    u = esc(r.units)
    return ('<section id="inputs" class="page"><h2>Inputs</h2>'
            f"<p>Units: <strong>{u}</strong> (stresses and properties in force/length² of that system, "
            "lengths in its length unit, temperatures in its degree).</p>"
            "<h3>Materials</h3>" + table(["material", "kind", "properties"], mats)
            + "<h3>Laminates and sections</h3>"
            + table(["section", "laminate", f"thickness [{r.units}: length]", "offset",
                     "plies, bottom (1) to top: material angle × thickness"], secs, numeric=(2, 3))
            + "<h3>Zones</h3>" + table(["zone id", "zone", "laminate"],
                                      [[i, z, lam] for i, (z, lam) in enumerate(r.zones)])
            + "<h3>Cases</h3>" + table(["case", "kind", "ΔT", "pressure", "factor of safety"], cases,
                                       numeric=(2, 3, 4))
            + "<h3>Criteria and factors</h3>"
            + table(["setting", "value"], [[k, _json_cell(v)] for k, v in r.analysis.items()])
            + "</section>")


def _provenance(r: ReportInputs) -> str:
    rows = [[k, _json_cell(v)] for k, v in r.provenance.items()]
    files = [[role, e.get("path", ""), e.get("sha256", "")] for role, e in r.inputs.items()]
    return ('<section id="provenance"><h2>Provenance</h2>' + table(["item", "value"], rows)
            + "<h3>Input files</h3>" + table(["role", "path", "SHA-256"], files, cls="mono") + "</section>")


def build_report(r: ReportInputs) -> str:
    """The complete HTML document of the report (see the module docstring)."""
    caution = f'<div class="caution" role="note">Caution: {esc(CAUTION)}</div>'
    header = (f'<header class="top"><h1>{esc(r.title)}: ply margins</h1><p>plybridge '
              f"{esc(r.provenance.get('tool_version', ''))}, {esc(r.provenance.get('created', ''))}, units "
              f"{esc(r.units)}</p></header>")
    compare = ""
    if r.compare_fragment:
        compare = (f'<section id="compare" class="page"><h2>Comparison with the solver</h2>'
                   f"{check_fragment(r.compare_fragment)}</section>")
    body = "\n".join([header, caution, _summary(r), _hot_spots(r), _figures(r), compare, _inputs(r),
                      _provenance(r), caution])
    return PAGE.format(version=esc(r.provenance.get("tool_version", "")), title=esc(f"{r.title}: plybridge report"),
                       style=STYLE, body=body)
