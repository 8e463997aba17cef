"""The comparison as an HTML fragment the report embeds (``plybridge report --compare FRAG.html``).

Static markup only: no script, no external resource, every string from the
inputs escaped with :func:`html.escape`.
"""

from __future__ import annotations

from html import escape

#: Rows of the per-ply table shown (the largest differences first).
MAX_PLY_ROWS = 30


def _num(v, fmt: str = ".3g") -> str:
    return "—" if v is None else escape(format(v, fmt) if isinstance(v, (int, float)) else str(v))


def _table(head: list[str], rows: list[list[str]]) -> str:
    th = "".join(f"<th>{escape(h)}</th>" for h in head)
    body = "".join("<tr>" + "".join(f"<td>{c}</td>" for c in r) + "</tr>" for r in rows)
    return f"<table><thead><tr>{th}</tr></thead><tbody>{body}</tbody></table>"


def _diagnosis(diag: list[dict]) -> str:
    if not diag:
        return ""
    out = ["<h3>Diagnosis</h3>"]
    for d in diag:
        out.append(f"<h4>Zone {escape(str(d['zone']))} (largest relative difference {_num(d['discrepancy'])})</h4>")
        if d["explained"]:
            items = "".join(f"<li><strong>{escape(h['explanation'])}</strong>. Fix: {escape(h['fix'])} "
                            f"(residual {_num(h['residual'])}, {_num(100 * h['removed'], '.1f')} % removed)</li>"
                            for h in d["explained"])
            out.append(f"<ol>{items}</ol>")
        else:
            best = d.get("best")
            hint = (f" The closest, {escape(best['explanation'])}, removes {_num(100 * best['removed'], '.1f')} %."
                    if best else "")
            out.append(f"<p>No single convention error explains this zone.{hint}</p>")
    return "".join(out)


def compare_section_html(summary: dict) -> str:
    """The comparison section of the report.

    Parameters
    ----------
    summary : dict
        The summary of :func:`bridge.compare.run.run_compare` (verdict, tolerance, zones, plies, worst cells,
        diagnosis).

    Returns
    -------
    str
        A ``<section>`` element: verdict, per-zone maxima, the per-ply table, the worst cells and the diagnosis.
    """
    verdict = summary.get("verdict", "fail")
    q = escape(str(summary.get("quantity", "stress")))
    head = (f"<h2>Cross-check against the solver's ply {q}</h2>"
            f"<p class=\"verdict {'pass' if verdict == 'pass' else 'fail'}\">Verdict: <strong>"
            f"{escape(str(verdict)).upper()}</strong> — largest relative difference "
            f"{_num(summary.get('max_discrepancy'))} against a tolerance of {_num(summary.get('tolerance'))}; "
            f"{_num(100 * summary.get('fraction_cells_within', 0.0), '.1f')} % of cells within tolerance, "
            f"{_num(summary.get('compared_values'), 'd')} values compared.</p>")
    cov = summary.get("coverage")
    if cov:
        zones = "; ".join(f"{escape(str(z))}: {escape(str(c.get('text', '')))}"
                          for z, c in cov.get("zones", {}).items())
        head += f"<p>Coverage: {escape(str(cov.get('text', '')))} ({zones}).</p>"
    if summary.get("note"):
        head += f"<p>{escape(str(summary['note']))}</p>"
    zones = _table(["zone", "cells", "largest relative difference", "cells within"],
                   [[escape(str(z)), _num(v["cells"], "d"), _num(v["max_discrepancy"]),
                     _num(None if v["within"] is None else 100 * v["within"], ".1f") + " %"]
                    for z, v in summary.get("zones", {}).items()])
    plies = sorted(summary.get("plies", []), key=lambda r: -r["max_rel"])[:MAX_PLY_ROWS]
    ply_table = _table(["zone", "ply", "component", "scale", "max |difference|", "max relative", "within"],
                       [[escape(str(r["zone"])), _num(r["ply"], "d"), escape(str(r["component"])), _num(r["scale"]),
                         _num(r["max_abs"]), _num(r["max_rel"]), _num(100 * r["within"], ".1f") + " %"]
                        for r in plies])
    worst = _table(["cell", "zone", "relative difference", "case", "ply", "point", "component"],
                   [[_num(w["cell"], "d"), escape(str(w["zone"])), _num(w["discrepancy"]), escape(str(w["case"])),
                     _num(w["ply"], "d"), escape(str(w["point"])), escape(str(w["component"]))]
                    for w in summary.get("worst_cells", [])])
    return ("<section class=\"compare\">" + head + "<h3>Zones</h3>" + zones
            + "<h3>Plies (largest differences first)</h3>" + ply_table + "<h3>Worst cells</h3>" + worst
            + _diagnosis(summary.get("diagnosis", [])) + "</section>\n")
