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
from typing import Any, Sequence

from shells.defaults import CAUTION

from .report_html import PAGE, STYLE
from .run_meta import RunMeta



@dataclass(frozen=True)
class ReportInputs:
    """Everything the report shows (plain data; strings are escaped when written).

    Attributes
    ----------
    meta : RunMeta
        The store's run metadata.
    store : str
        Path of the store (shown in the provenance).
    figures : list of (caption, PNG bytes)
        Maps and plots, in order.
    compare_fragment : str or None
        Trusted HTML from the compare command.
    """

    meta: RunMeta
    store: str = ""
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


def _minima(title: str, key: str, entries, extra: bool = False) -> str:
    headers = [key] + (["laminate"] if extra else []) + ["min margin", "cell"]
    rows = [[e.name] + ([e.laminate] if extra else []) + [e.min_margin, e.cell] for e in entries]
    return f"<h3>{esc(title)}</h3>" + table(headers, rows, numeric=(len(headers) - 2,))


def _summary(r: ReportInputs) -> str:
    s = r.meta.summary
    w = s.worst
    head = ('<p class="headline">Minimum margin of safety: <strong>'
            + (f"{float(w.min_margin):.4g}" if w else "none") + "</strong>"
            + (f" at cell {esc(w.cell)}, ply {esc(w.ply)}, case {esc(w.case)}, "
               f"{esc(w.criterion)} ({esc(w.mode)}), {esc(w.point)} of the ply"
               if w else "") + "</p>")
    parts = ['<section id="summary"><h2>Summary</h2>', head,
             table(["quantity", "value"], [["minimum margin", w.min_margin if w else ""],
                                           ["strength ratio", w.strength_ratio if w else ""],
                                           ["flagged cells", s.flagged_cells]],
                   numeric=(1,), cls="summary"),
             _minima("By zone", "zone", s.zones, True),
             _minima("By laminate", "laminate", s.laminates),
             _minima("By case", "case", s.cases),
             _minima("By criterion", "criterion", s.criteria)]
    if s.flagged_cells:
        parts.append(f"<p>{esc(s.flagged_cells)} cells had NaN or infinite resultants in some case; those "
                     f"cases were skipped there (e.g. cells {esc(list(s.flagged_examples[:10]))}).</p>")
    return "".join(parts) + "</section>"


def _hot_spots(r: ReportInputs) -> str:
    keys = ("cell", "min_margin", "ply", "strength_ratio", "case", "point", "criterion", "mode")
    rows = [[i + 1] + [getattr(h, k) for k in keys] for i, h in enumerate(r.meta.summary.hot_spots)]
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
    m = r.meta
    mats = [[x.name, x.kind, ", ".join([f"{p.key} = {_json_cell(p.value)}" for p in x.properties]
                                       + [f"knockdown = {_json_cell(x.knockdown)}"])]
            for x in m.materials]
    secs = []
    for s in m.sections:
        plies = "; ".join(f"{i + 1}: {p.material} {p.angle:g}° × {p.thickness:g}" for i, p in enumerate(s.plies))
        secs.append([s.id, s.laminate, s.thickness, s.offset, plies])
    cases = [[c.name, c.kind, c.delta_T, c.pressure, c.factor_of_safety, ", ".join(c.held) or "none"]
             for c in m.cases]
    a = m.analysis
    settings = [["criteria", _json_cell(list(a.criteria))],
                ["factor_of_safety", _json_cell({f.name: f.value for f in a.factor_of_safety})],
                ["transverse_shear", a.transverse_shear], ["shear_factor", _json_cell(a.shear_factor)],
                ["wrinkling_coefficient", _json_cell(a.wrinkling_coefficient)], ["hot_spots", _json_cell(a.hot_spots)],
                ["knockdown", "multiplies every allowable before R is solved; margin = R / factor of safety − 1"]]
    settings += [[f"default: {d.material}, {d.criterion}", d.note] for d in a.defaults]
    u = esc(m.units)
    return ('<section id="inputs" class="page"><h2>Inputs</h2>'
            f"<p>Units: <strong>{u}</strong> (stresses and properties in force/length² of that system, "
            "lengths in its length unit, temperatures in its degree).</p>"
            "<h3>Materials</h3>" + table(["material", "kind", "properties"], mats)
            + "<h3>Laminates and sections</h3>"
            + table(["section", "laminate", f"thickness [{m.units}: length]", "offset",
                     "plies, bottom (1) to top: material angle × thickness"], secs, numeric=(2, 3))
            + "<h3>Zones</h3>" + table(["zone id", "zone", "laminate"],
                                      [[i, z.name, z.laminate] for i, z in enumerate(m.zones)])
            + "<h3>Cases</h3>" + table(["case", "kind", "ΔT", "pressure", "factor of safety",
                                        "held (fixed, not scaled)"], cases, numeric=(2, 3, 4))
            + "<h3>Criteria and factors</h3>"
            + table(["setting", "value"], settings)
            + "</section>")


def _provenance(r: ReportInputs) -> str:
    m = r.meta
    p = m.provenance
    rows = [["tool", p.tool], ["tool_version", p.tool_version], ["created", p.created], ["store", r.store],
            ["store layout", m.store_kind], ["conventions", m.conventions],
            ["criteria evaluated", _json_cell(list(m.criteria_used))]]
    files = [[f.role, f.path, f.sha256] for f in p.inputs]
    return ('<section id="provenance"><h2>Provenance</h2>' + table(["item", "value"], rows)
            + "<h3>Input files</h3>" + table(["role", "path", "SHA-256"], files, cls="mono") + "</section>")


def build_report(r: ReportInputs) -> str:
    """The complete HTML document of the report (see the module docstring)."""
    caution = f'<div class="caution" role="note">Caution: {esc(CAUTION)}</div>'
    m = r.meta
    header = (f'<header class="top"><h1>{esc(m.title)}: ply margins</h1><p>plybridge '
              f"{esc(m.provenance.tool_version)}, {esc(m.provenance.created)}, units "
              f"{esc(m.units)}</p></header>")
    compare = ""
    if r.compare_fragment:
        compare = (f'<section id="compare" class="page"><h2>Comparison with the solver</h2>'
                   f"{check_fragment(r.compare_fragment)}</section>")
    body = "\n".join([header, caution, _summary(r), _hot_spots(r), _figures(r), compare, _inputs(r),
                      _provenance(r), caution])
    return PAGE.format(version=esc(m.provenance.tool_version), title=esc(f"{m.title}: plybridge report"),
                       style=STYLE, body=body)
