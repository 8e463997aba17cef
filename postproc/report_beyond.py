"""The report's section on the analyses beyond the first-ply envelope: progressive failure (first- and last-ply
load factors per zone, their ratio, the failure sequence of the hot spots), the misalignment tolerance and the
envelopes restricted to chosen criteria, modes or cases beside the full one.

Plain data in (the run metadata and :class:`FailureSequence` rows read from the store), HTML out; every string is
escaped by :mod:`postproc.report_html`.
"""

from __future__ import annotations

from dataclasses import dataclass

from .numbers import degrees, short, sig
from .report_html import esc, margin, num, table
from .run_meta import RunMeta

DISCOUNTS = {1: "matrix", 2: "fibre"}


@dataclass(frozen=True)
class FailureEvent:
    """One ply failure of a progressive analysis: load factor, ply (as read), criterion (mode), discount."""

    factor: float
    ply: str
    criterion: str
    discount: str


@dataclass(frozen=True)
class FailureSequence:
    """The failures of one hot-spot cell in one case, in order."""

    cell: int
    zone: str
    case: str
    first: float | None
    last: float | None
    events: tuple[FailureEvent, ...]


def _factor(value) -> str:
    if value is None:
        return "—"
    return "∞ (no failure)" if value == float("inf") else sig(value)


def _progressive(m: RunMeta, sequences, open_details: bool) -> str:
    p = m.analysis.progressive
    s = m.summary
    head = (f"<p>Ply discount to the last ply (docs/criteria.md, progressive failure): each case's mechanical "
            f"resultants are scaled by a load factor λ with its held part (thermal, moisture, held cases) fixed. A "
            f"failed ply keeps {esc(short(p.matrix_retained))} of E2 and G12 after a matrix failure and "
            f"{esc(short(p.fibre_retained))} of its moduli after a fibre failure; failures are found by "
            f"{esc(', '.join(p.criteria))}. First-ply λ: the first ply failure; last-ply λ: the load the laminate "
            "can carry no more (every ply failed in its fibres, or the stiffness left cannot carry the load); ∞: no "
            "failure in that load direction. Transverse shear, σ3 and sandwich face checks are not part of the "
            "discount.</p>")
    rows = [[z.zone, num(z.first), num(z.first_cell if z.first is not None else None), num(z.last),
             num(z.last_cell if z.last is not None else None),
             "—" if z.ratio_min is None else f"{sig(z.ratio_min)} … {sig(z.ratio_max)}"] for z in s.progressive]
    zones = table(["zone", "lowest first-ply λ [-]", "at cell", "lowest last-ply λ [-]", "at cell",
                   "last / first over the zone's cells and cases [-]"], rows)
    out = [head, zones]
    if sequences:
        out.append("<h3>Failure sequence of the hot spots</h3><p class=\"note\">Cells with the lowest first-ply "
                   "factors, each in its case with the lowest one, laminate at the cell's governing turn; plies "
                   "that fail in the same step share a load factor.</p>"
                   f"<details{' open' if open_details else ''}><summary>The sequences ({len(sequences)} cells)"
                   "</summary>")
        for q in sequences:
            rows = [[num(k + 1), num(e.factor), e.ply, e.criterion, e.discount] for k, e in enumerate(q.events)]
            out.append(f"<h4>Cell {esc(q.cell)}, zone {esc(q.zone)}, case {esc(q.case)}: first-ply λ "
                       f"{esc(_factor(q.first))}, last-ply λ {esc(_factor(q.last))}</h4>"
                       + table(["step", "λ [-]", "ply: angle, material", "criterion (mode)", "discount"], rows))
        out.append("</details>")
    return "<h3>Progressive failure</h3>" + "".join(out)


def _misalignment(m: RunMeta) -> str:
    d = m.analysis.misalignment
    n = m.summary.misaligned_cells
    return ("<h3>Misalignment tolerance</h3>"
            f"<p>Applied: every cell was checked with its laminate as placed and turned by −{esc(degrees(d))} and "
            f"+{esc(degrees(d))} about the normal, and the worst of the three kept (margins, strength ratios and "
            f"every map of this report). The turned laminate governs in {esc(n)} cells; the map field "
            "<code>misalignment</code> (plybridge render) shows which turn governs where.</p>")


def _envelopes(m: RunMeta) -> str:
    s = m.summary
    by_name = {e.name: e for e in m.analysis.envelopes}
    rows = [["full", "every criterion, mode and case", margin(s.worst.min_margin if s.worst else None),
             num(s.worst.cell if s.worst else None), s.worst.case if s.worst else "",
             f"{s.worst.criterion} ({s.worst.mode})" if s.worst else ""]]
    for e in s.envelopes:
        info = by_name.get(e.name)
        scope = "; ".join(x for x in (
            f"criteria {', '.join(info.criteria)}" if info else "",
            f"modes {', '.join(info.modes)}" if info and info.modes else "",
            f"case kinds {', '.join(info.kinds)}" if info and info.kinds else "",
            f"cases {', '.join(info.cases)}" if info and info.cases else "") if x)
        scope += f" — {info.description}" if info and info.description else ""
        w = e.worst
        rows.append([e.name, scope, margin(w.min_margin if w else None), num(w.cell if w else None),
                     w.case if w else "", f"{w.criterion} ({w.mode})" if w else ""])
    names = [e.name for e in s.envelopes]
    per_zone = {e.name: {z.name: z for z in e.zones} for e in s.envelopes}
    zone_rows = [[z.name, margin(z.min_margin)] + [margin(per_zone[n][z.name].min_margin if z.name in per_zone[n]
                                                          else None) for n in names] for z in s.zones]
    return ("<h3>Restricted envelopes beside the full one</h3>"
            '<p class="note">A restricted envelope keeps only the named criteria, modes (fibre, matrix or mode '
            "names) and cases; its margins use the same factors of safety and knockdowns as the full envelope.</p>"
            + table(["envelope", "scope", "min margin [-]", "cell", "case", "criterion (mode)"], rows)
            + table(["zone", "full: min margin [-]"] + [f"{n}: min margin [-]" for n in names], zone_rows))


def beyond_section(m: RunMeta, sequences=(), open_details: bool = False) -> str:
    """The section, or "" when the run used none of these analyses (failure sequences folded unless
    ``open_details``)."""
    a = m.analysis
    parts = []
    if a.progressive is not None:
        parts.append(_progressive(m, sequences, open_details))
    if a.misalignment > 0:
        parts.append(_misalignment(m))
    if m.summary.envelopes:
        parts.append(_envelopes(m))
    if not parts:
        return ""
    return '<section id="beyond" class="page"><h2>Beyond the first-ply envelope</h2>' + "".join(parts) + "</section>"
