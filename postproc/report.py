"""The self-contained HTML report of a recovery run.

:func:`build_report` takes plain data — the run's metadata (:class:`postproc.run_meta.RunMeta`), facts about the
cells it names, the hot spots, pictures as PNG bytes, the verification rows and a comparison summary — and
returns one HTML document with the pictures embedded as data URIs. Every string from an input is escaped; no
HTML from outside is ever inserted (the comparison is rendered here from its data). Numbers carry their unit in
the column head and four significant figures; only failing (negative) margins are marked.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping, Sequence

from .hotspots import SAME, Cluster
from .numbers import degrees, sig
from .report_beyond import beyond_section
from .report_compare import comparison_section
from .report_html import data_uri, esc, margin, num, page, table
from .report_inputs import inputs_section, provenance_section, settings_section
from .run_meta import RunMeta


@dataclass(frozen=True)
class CellFact:
    """What the report says about one cell: where it is and what governs it."""

    cell: int
    zone: str
    laminate: str
    ply: int
    angle: float | None
    material: str
    case: str
    criterion: str
    mode: str
    point: str
    min_margin: float | None
    strength_ratio: float | None
    centre: tuple[float, float, float]

    @property
    def ply_text(self) -> str:
        if self.ply <= 0:
            return "—"
        return f"{self.ply}: {degrees(self.angle)} {self.material}" if self.angle is not None else str(self.ply)


@dataclass(frozen=True)
class Figure:
    """A picture of the report (PNG bytes, embedded as a data URI) and the sentence under it."""

    caption: str
    png: bytes


@dataclass(frozen=True)
class ReportInputs:
    """Everything the report shows (plain data; strings are escaped when written).

    Attributes
    ----------
    meta : RunMeta
    store : str
        Path of the store (provenance).
    cells : mapping cell → CellFact
        Every cell the report names (minima, hot spots).
    hot : sequence of Cluster
        Hot spots per zone (:func:`postproc.hotspots.clusters`).
    figures : sequence of Figure
        Maps (one per row) and the through-thickness plot.
    n_cells, failing_cells : int
        Cells of the model, cells with a negative margin.
    verification : sequence of dict, optional
        Rows of the published checks (``shells.published.check``).
    comparison : dict, optional
        The summary of a comparison file (``plybridge compare``), rendered by :mod:`postproc.report_compare`.
    comparison_source : str
        The comparison file's path.
    open_details : bool
        Show folded lists unfolded (for print and PDF).
    sequences : sequence of postproc.report_beyond.FailureSequence
        Failure sequences of the hot spots (progressive analysis).
    """

    meta: RunMeta
    store: str
    cells: Mapping[int, CellFact]
    hot: Sequence[Cluster] = ()
    figures: Sequence[Figure] = field(default_factory=tuple)
    n_cells: int = 0
    failing_cells: int = 0
    verification: Sequence[Mapping] | None = None
    comparison: Mapping | None = None
    comparison_source: str = ""
    open_details: bool = False
    sequences: Sequence = ()


def _fact_columns(f: CellFact | None, skip: Sequence[str] = ()) -> list:
    """Cells of the governing state: cell, zone, ply, case, criterion (mode), point."""
    if f is None:
        return ["—"] * (6 - len(skip))
    cols = {"cell": num(f.cell), "zone": f.zone, "ply": f.ply_text, "case": f.case,
            "criterion": f"{f.criterion} ({f.mode})" if f.mode else f.criterion, "point": f.point}
    return [v for k, v in cols.items() if k not in skip]


_FACT_HEAD = ["cell", "zone", "critical ply: angle, material", "governing case", "criterion (mode)", "point"]


def _head(skip: Sequence[str] = ()) -> list[str]:
    keys = ["cell", "zone", "ply", "case", "criterion", "point"]
    return [h for k, h in zip(keys, _FACT_HEAD) if k not in skip]


_CELL_ORDER = {"checked": "checked: the result file's own cells were matched to the mesh",
               "assumed": "assumed: HDF5 resultants carry no cells and were taken in the mesh's order"}


def _summary(r: ReportInputs) -> str:
    m, s = r.meta, r.meta.summary
    w = r.cells.get(s.worst.cell) if s.worst else None
    if w is None:
        head = '<p class="headline">No finite margin: no criterion applies to any ply in any case.</p>'
    else:
        verdict = "negative: the worst ply fails" if (w.min_margin or 0) < 0 else "positive"
        head = (f'<p class="headline">Minimum margin of safety <strong>{esc(sig(w.min_margin))}</strong> '
                f"({esc(verdict)}) at cell {esc(w.cell)} in zone {esc(w.zone)} (laminate {esc(w.laminate)}), ply "
                f"{esc(w.ply_text)}, case {esc(w.case)}, {esc(w.criterion)} ({esc(w.mode)}), {esc(w.point)} of "
                "the ply.</p>")
    key = table(["quantity", "value"], [
        ["minimum margin of safety [-]", margin(w.min_margin if w else None)],
        ["strength ratio there [-]", num(w.strength_ratio if w else None)],
        ["cells with a negative margin", num(r.failing_cells)],
        ["cells", num(r.n_cells)], ["cases", num(len(m.cases))],
        ["cells flagged (non-finite resultants in some case; those cases skipped)", num(s.flagged_cells)],
        ["cell order of the resultants", _CELL_ORDER.get(s.cell_order, s.cell_order or "—")],
        ["material values checked against plausible ranges", "yes" if m.analysis.check_ranges else
         "NO (check_ranges = false): exotic values were accepted unchecked"], *_beyond_rows(m)],
        cls="summary")
    parts = ['<section id="summary"><h2>Summary</h2>', head, key]
    if s.flagged_cells:
        parts.append(f'<p class="note">Flagged cells include {esc(", ".join(map(str, s.flagged_examples[:10])))}.'
                     "</p>")
    if s.notes:
        parts.append("<h3>Notes on the inputs</h3><ul>" + "".join(f"<li>{esc(x)}</li>" for x in s.notes) + "</ul>")
    if s.shear_check:
        parts.append("<h3>Transverse shear from the moment field: input Q against the field's Q</h3>" + table(
            ["zone", "mean relative difference [-]", "largest relative difference [-]", "cells on the Q-only method"],
            [[c.zone, num(c.mean), num(c.max), num(c.fallback_cells)] for c in s.shear_check]))
    parts.append(_minima(r))
    return "".join(parts) + "</section>"


def _no_margin_note(infos, names) -> str:
    """Why a case has no finite margin: nothing in it is scaled (a temperature change only, or a held case on
    its own, whose resultants are part of the fixed state too)."""
    if not names:
        return ""
    held = "held: its resultants, pressure and ΔT are all fixed"
    thermal = "no mechanical load, a temperature change only"
    why = [f"{esc(n)} ({held if c and (c.held or c.held_steps) else thermal})" for n, c in zip(names, infos)]
    return ('<p class="note">No finite margin in ' + "; ".join(why) + ": nothing in the case is scaled, and the "
            "strength ratio is the factor on the scaled part with the fixed part held (docs/conventions.md), "
            "infinite while the fixed state holds (0, margin −1, if it failed).</p>")


def _beyond_rows(m: RunMeta) -> list:
    """Summary rows of the misalignment tolerance and the progressive analysis, when the run used them."""
    a, s = m.analysis, m.summary
    rows = []
    if a.misalignment > 0:
        rows.append(["misalignment tolerance", f"±{degrees(a.misalignment)} applied (worst of three turns kept); "
                     f"a turned laminate governs {s.misaligned_cells} cells"])
    if a.progressive is not None:
        firsts = [z.first for z in s.progressive if z.first is not None]
        lasts = [z.last for z in s.progressive if z.last is not None]
        rows.append(["lowest first-ply / last-ply load factor [-]",
                     f"{sig(min(firsts)) if firsts else '∞'} / {sig(min(lasts)) if lasts else '∞'} (section "
                     "beyond the first-ply envelope)"])
    return rows


def _minima(r: ReportInputs) -> str:
    m, s, c = r.meta, r.meta.summary, r.cells
    zones = {z.name: z for z in m.zones}
    rows = [[z.name, z.laminate, num(zones[z.name].cells if z.name in zones else None), margin(z.min_margin),
             *_fact_columns(c.get(z.cell), ("zone",))] for z in s.zones]
    out = ["<h3>By zone</h3>", table(["zone", "laminate", "cells", "min margin [-]", *_head(("zone",))], rows)]
    lam_zones: dict[str, list[str]] = {}
    for z in m.zones:
        lam_zones.setdefault(z.laminate, []).append(z.name)
    rows = [[lam.name, ", ".join(lam_zones.get(lam.name, [])), margin(lam.min_margin), *_fact_columns(c.get(lam.cell))]
            for lam in s.laminates]
    out += ["<h3>By laminate</h3>", table(["laminate", "zones", "min margin [-]", *_head()], rows)]
    cases = {x.name: x for x in m.cases}
    where = ("ply", "case", "criterion", "point")    # the cell's own governing state may be another case's
    rows = [[x.name, cases[x.name].kind if x.name in cases else "", num(cases[x.name].factor_of_safety)
             if x.name in cases else "", margin(x.min_margin), *_fact_columns(c.get(x.cell), where)]
            for x in s.cases]
    out += ["<h3>By case</h3>",
            table(["case", "kind", "factor of safety [-]", "min margin [-]", *_head(where)], rows),
            _no_margin_note([cases.get(x.name) for x in s.cases if x.min_margin is None], [x.name for x in s.cases
                                                                                          if x.min_margin is None])]
    rows = [[x.name, margin(x.min_margin), *_fact_columns(c.get(x.cell), where)] for x in s.criteria]
    out += ["<h3>By criterion</h3>", table(["criterion", "min margin [-]", *_head(where)], rows),
            '<p class="note">By case and by criterion, the cell where the minimum occurs; the ply and failure mode '
            "there are those of the hot-spot rows and profiles, which show every case and criterion.</p>"]
    return "".join(out)


def _hot_spots(r: ReportInputs) -> str:
    m = r.meta
    length = m.label("length")
    zone_names = [z.name for z in m.zones]
    rows = []
    rank: dict[int, int] = {}
    for h in r.hot:
        f = r.cells.get(h.head)
        rank[h.zone] = rank.get(h.zone, 0) + 1
        x, y, z = f.centre if f else (None, None, None)
        rows.append([zone_names[h.zone] if h.zone < len(zone_names) else h.zone, num(rank[h.zone]),
                     f.laminate if f else "", num(h.head), num(h.size), margin(h.min_margin),
                     num(f.strength_ratio if f else None), f.ply_text if f else "", f.case if f else "",
                     f"{f.criterion} ({f.mode})" if f else "", f.point if f else "", num(x), num(y), num(z)])
    return ('<section id="hotspots"><h2>Hot spots</h2>'
            f'<p class="note">The worst places of each zone. A row gathers the touching cells whose strength ratio '
            f"is within {esc(sig(100 * SAME, 2))} % of the worst one's (its head cell); the governing state and "
            "the coordinates are those of the head cell.</p>"
            + table(["zone", "rank", "laminate", "head cell", "cells", "min margin [-]", "strength ratio [-]",
                     "critical ply: angle, material", "case", "criterion (mode)", "point", f"x [{length}]",
                     f"y [{length}]", f"z [{length}]"], rows, cls="hotspots") + "</section>")


def _figures(r: ReportInputs) -> str:
    figs = "".join(f'<figure><img alt="{esc(f.caption)}" src="{data_uri(f.png)}"><figcaption>{esc(f.caption)}'
                   "</figcaption></figure>" for f in r.figures)
    return f'<section id="pictures" class="page"><h2>Maps and through-thickness</h2>{figs}</section>'


def _verification(rows: Sequence[Mapping] | None, open_details: bool = False) -> str:
    if rows is None:
        return ""
    passed = sum(bool(x.get("pass")) for x in rows)
    body = [[x.get("case", ""), x.get("source", ""), x.get("quantity", ""), num(x.get("expected")),
             num(x.get("computed")), num(x.get("relative_error")), "yes" if x.get("pass") else "NO"] for x in rows]
    failed = [x.get("case", "") for x in rows if not x.get("pass")]
    verdict = (f'<p class="verdict-fail">{len(failed)} check(s) fail: {esc(", ".join(failed))}. Do not use these '
               "results until they pass.</p>" if failed else "")
    return ('<section id="verification"><h2>Verification</h2>'
            f"<p>{passed} of {len(rows)} published checks of plybridge's mechanics pass in this installation "
            "(the list run by <code>plybridge verify</code>).</p>" + verdict
            + f"<details{' open' if open_details else ''}><summary>The checks, with their sources</summary>"
            + table(["check", "source", "quantity", "expected", "computed", "relative error", "pass"], body)
            + "</details></section>")


def build_report(r: ReportInputs) -> str:
    """The complete HTML document of the report (see the module docstring)."""
    m = r.meta
    caution = f'<div class="caution" role="note">Caution: {esc(m.caution)}</div>'
    header = (f'<header class="top"><h1>{esc(m.title)}: ply margins</h1><p>plybridge '
              f"{esc(m.provenance.tool_version)}, run of {esc(m.provenance.created)}, unit system {esc(m.units)} "
              f"(stress {esc(m.label('stress'))}, length {esc(m.label('length'))}, temperature change "
              f"{esc(m.label('temperature'))})</p></header>")
    compare = comparison_section(r.comparison, r.comparison_source) if r.comparison is not None else ""
    body = "\n".join([header, caution, _summary(r), _hot_spots(r), _figures(r),
                      beyond_section(m, r.sequences, r.open_details),
                      compare, inputs_section(m, r.open_details), settings_section(m),
                      _verification(r.verification, r.open_details), provenance_section(m, r.store), caution])
    return page(f"{m.title}: plybridge report", m.provenance.tool_version, body)
