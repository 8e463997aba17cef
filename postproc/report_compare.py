"""The comparison with a solver's ply output, as a report section rendered from the comparison's data.

The data is the ``summary`` of a comparison file written by ``plybridge compare`` (docs/compare.md). It is
read defensively: a key of the wrong type is shown as missing, keys this version does not know (coverage
figures, later additions) are listed generically, and every string is escaped. No HTML from the file is used.
"""

from __future__ import annotations

from typing import Any, Mapping

from .numbers import sig
from .report_html import Cell, esc, num, table

#: Rows of the per-ply table shown (the largest differences first).
MAX_PLY_ROWS = 30
#: Keys rendered in their own tables; anything else goes to the generic part.
KNOWN = {"verdict", "quantity", "tolerance", "max_discrepancy", "fraction_cells_within", "compared_values", "note",
         "zones", "plies", "worst_cells", "diagnosis", "cases", "units", "title", "coverage", "skipped_cases",
         "unmatched_solver_cases"}


def _number(value: Any) -> int | float | None:
    """A number of the file as it is (an integer stays an integer); anything else None."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    return value if isinstance(value, int) else float(value)


def _count(value: Any) -> Cell:
    """A count or an index (cells, values, ply points, a ply number): shown as an integer, never as 192.0."""
    v = _number(value)
    return num(int(v) if isinstance(v, float) and v.is_integer() else v)


def _percent(value: Any) -> Cell:
    v = _number(value)
    return num(None if v is None else 100.0 * v)


def _dicts(value: Any) -> list[Mapping]:
    return [v for v in value if isinstance(v, Mapping)] if isinstance(value, list) else []


def _generic(key: str, value: Any) -> str:
    """A key this version does not know: a scalar as a row, an object as a table, a list of objects as a table."""
    if isinstance(value, Mapping):
        rows = [[k, num(v) if _number(v) is not None else ("—" if v is None else str(v))] for k, v in value.items()
                if not isinstance(v, (Mapping, list))]
        nested = "".join(_generic(f"{key}: {k}", v) for k, v in value.items() if isinstance(v, (Mapping, list)))
        return f"<h4>{esc(key)}</h4>" + (table(["item", "value"], rows) if rows else "") + nested
    items = _dicts(value)
    if items:
        heads = list(dict.fromkeys(k for it in items for k in it))[:12]
        rows = [[num(it.get(h)) if _number(it.get(h)) is not None else str(it.get(h, "")) for h in heads]
                for it in items[:50]]
        return f"<h4>{esc(key)}</h4>" + table(heads, rows)
    if isinstance(value, list):
        return f"<h4>{esc(key)}</h4><p>{esc(', '.join(map(str, value[:50])))}</p>"
    return ""


def comparison_section(summary: Mapping | None, source: str = "") -> str:
    """The ``<section>`` of a comparison summary: verdict, coverage and other figures, zones, plies, worst cells,
    diagnosis."""
    if not isinstance(summary, Mapping):
        return ('<section id="compare" class="page"><h2>Comparison with the solver</h2><p>The comparison file holds '
                "no readable summary.</p></section>")
    s = summary
    verdict = str(s.get("verdict", "unknown"))
    cls = "verdict-fail" if verdict != "pass" else ""
    head = (f'<section id="compare" class="page"><h2>Comparison with the solver\'s ply {esc(s.get("quantity", ""))}'
            f'</h2><p class="{cls}">Verdict: {esc(verdict.upper())}</p>'
            + (f'<p class="note">From {esc(source)}.</p>' if source else ""))
    figures = [["largest relative difference [-]", num(_number(s.get("max_discrepancy")))],
               ["tolerance [-]", num(_number(s.get("tolerance")))],
               ["cells within tolerance [%]", _percent(s.get("fraction_cells_within"))],
               ["values compared", _count(s.get("compared_values"))]]
    scalars = [[k, num(v) if _number(v) is not None else str(v)] for k, v in s.items()
               if k not in KNOWN and not isinstance(v, (Mapping, list)) and v is not None]
    if isinstance(s.get("skipped_cases"), list) and s["skipped_cases"]:
        figures.append(["combinations not compared (no solver values)", ", ".join(map(str, s["skipped_cases"]))])
    if isinstance(s.get("unmatched_solver_cases"), list) and s["unmatched_solver_cases"]:
        figures.append(["solver cases not compared (no case of that name)",
                        ", ".join(map(str, s["unmatched_solver_cases"]))])
    parts = [head, table(["figure", "value"], figures + scalars)]
    if s.get("note"):
        parts.append(f'<p class="note">{esc(s["note"])}</p>')
    parts.append(_coverage(s.get("coverage")))
    parts += [_generic(k, v) for k, v in s.items() if k not in KNOWN and isinstance(v, (Mapping, list))]
    zones = s.get("zones") if isinstance(s.get("zones"), Mapping) else {}
    rows = [[z, _count(v.get("cells")), num(_number(v.get("max_discrepancy"))), _percent(v.get("within"))]
            for z, v in zones.items() if isinstance(v, Mapping)]
    parts += ["<h3>Zones</h3>", table(["zone", "cells compared", "largest relative difference [-]",
                                       "cells within [%]"], rows)]
    plies = sorted(_dicts(s.get("plies")), key=lambda r: -(_number(r.get("max_rel")) or 0.0))[:MAX_PLY_ROWS]
    rows = [[r.get("zone", ""), _count(r.get("ply")), r.get("component", ""), num(_number(r.get("scale"))),
             num(_number(r.get("max_abs"))), num(_number(r.get("max_rel"))), _percent(r.get("within"))] for r in plies]
    parts += ["<h3>Plies, largest differences first</h3>",
              table(["zone", "ply", "component", "value scale", "largest |difference|", "largest relative [-]",
                     "within [%]"], rows)]
    rows = [[_count(w.get("cell")), w.get("zone", ""), num(_number(w.get("discrepancy"))), w.get("case", ""),
             _count(w.get("ply")), w.get("point", ""), w.get("component", "")] for w in _dicts(s.get("worst_cells"))]
    parts += ["<h3>Worst cells</h3>", table(["cell", "zone", "relative difference [-]", "case", "ply", "point",
                                             "component"], rows)]
    parts.append(_diagnosis(_dicts(s.get("diagnosis"))))
    return "".join(parts) + "</section>"


def _coverage(cov: Any) -> str:
    """What was checked: ply points compared over all (``coverage`` of docs/compare.md), per zone."""
    if not isinstance(cov, Mapping):
        return ""
    zones = cov.get("zones") if isinstance(cov.get("zones"), Mapping) else {}
    rows = [[z, _count(v.get("checked")), _count(v.get("total")),
             ", ".join(map(str, v.get("plies_checked", []))) if isinstance(v.get("plies_checked"), list) else "",
             str(v.get("text", ""))] for z, v in zones.items() if isinstance(v, Mapping)]
    head = (f"<h3>Coverage</h3><p>{esc(cov.get('text', ''))}"
            + (f" ({esc(sig(100 * _number(cov.get('fraction'))))} %)" if _number(cov.get("fraction")) is not None
               else "") + ".</p>")
    return head + (table(["zone", "ply points checked", "ply points", "plies checked", "summary"], rows) if rows
                   else "")


def _diagnosis(diag: list[Mapping]) -> str:
    if not diag:
        return ""
    out = ["<h3>Diagnosis</h3>"]
    for d in diag:
        out.append(f"<h4>Zone {esc(d.get('zone', ''))}</h4>")
        explained = _dicts(d.get("explained"))
        if explained:
            rows = [[h.get("name", ""), h.get("explanation", ""), h.get("fix", ""), num(_number(h.get("residual"))),
                     num(None if _number(h.get("removed")) is None else 100 * _number(h.get("removed")))]
                    for h in explained]
            out.append(table(["hypothesis", "the error", "the fix", "residual [-]", "removed [%]"], rows))
        else:
            best = d.get("best") if isinstance(d.get("best"), Mapping) else None
            hint = f" The closest: {best.get('explanation', '')}." if best else ""
            out.append(f"<p>No single convention error explains this zone.{esc(hint)}</p>")
            candidates = _dicts(d.get("candidates"))
            if candidates:
                out.append(table(["partial candidate", "the error", "the fix", "residual [-]"],
                                 [[h.get("name", ""), h.get("explanation", ""), h.get("fix", ""),
                                   num(_number(h.get("residual")))] for h in candidates]))
    return "".join(out)
