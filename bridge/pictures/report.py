"""The HTML (and PDF) report of a store: facts and pictures from the store → postproc.report → one file."""

from __future__ import annotations

import io
import json
import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np

from shells.errors import InputError

from bridge.atomic import atomic_path, write_text
from bridge.mesh.h5_rules import HDF5_SIGNATURE, open_h5
from bridge.pictures.plots import profile_figure_of
from bridge.pictures.render import draw_store_field, png_bytes
from bridge.results.store import StoreReader

#: Maps in the report, one per row: (field, views, caption).
REPORT_MAPS = (("margin", ("iso", "worst"), "Margin of safety: the envelope of cases at each cell's critical ply"),
               ("critical-ply", ("iso", "worst"), "Critical ply (the ply with the lowest margin), by laminate"),
               ("mode", ("iso", "worst"), "Governing criterion and failure mode"))
POINTS = ("bottom", "middle", "top")
#: Largest comparison summary read (bytes of JSON).
MAX_SUMMARY = 64 * 2 ** 20
#: Browsers that can print the report to PDF (first found on PATH).
BROWSERS = ("chromium", "chromium-browser", "google-chrome")


class CompareFileError(InputError):
    """A --compare file that is not a comparison written by plybridge compare."""


def cell_facts(st: StoreReader, cells) -> dict:
    """:class:`postproc.report.CellFact` of each cell (zone, laminate, critical ply, governing state, centre)."""
    from postproc.scene import cell_geometry
    from postproc.report import CellFact

    run = st.run
    ids = sorted({int(c) for c in cells if c is not None and int(c) >= 0})
    if not ids:
        return {}
    points, blocks = st.mesh()
    centres = cell_geometry(points, blocks).centres
    get = {name: st.array(f"cells/{name}") for name in ("min_margin", "strength_ratio", "critical_ply", "case",
                                                         "criterion", "mode", "point")}
    zone, section = st.array("model/zone"), st.array("model/section")
    out = {}
    for c in ids:
        sec = run.sections[int(section[c])]
        k = int(get["critical_ply"][c])
        ply = sec.plies[k - 1] if 1 <= k <= len(sec.plies) else None
        crit = int(get["criterion"][c])
        mode = int(get["mode"][c])
        info = run.criteria[crit] if 0 <= crit < len(run.criteria) else None
        case = int(get["case"][c])
        point = int(get["point"][c])
        finite = lambda v: float(v) if np.isfinite(v) else None  # noqa: E731
        out[c] = CellFact(c, run.zones[int(zone[c])].name, sec.laminate, k, ply.angle if ply else None,
                          ply.material if ply else "", st.case_names[case] if case >= 0 else "",
                          info.name if info else "", info.modes[mode] if info and 0 <= mode < len(info.modes) else "",
                          POINTS[point] if 0 <= point < 3 else "", finite(get["min_margin"][c]),
                          finite(get["strength_ratio"][c]), tuple(float(v) for v in centres[c]))
    return out


#: Hot spots whose failure sequence the report lists.
SEQUENCES = 8


def failure_sequences(st: StoreReader, limit: int = SEQUENCES) -> tuple:
    """:class:`postproc.report_beyond.FailureSequence` of the stored hot spots with the lowest first-ply factors
    (each in its case with the lowest one); () without a progressive analysis."""
    from postproc.numbers import degrees
    from postproc.report_beyond import DISCOUNTS, FailureEvent, FailureSequence

    if not st.has("hotspots/progressive_sequence"):
        return ()
    run = st.run
    cells, seq = st.array("hotspots/cell"), st.array("hotspots/progressive_sequence")
    first, last = st.array("hotspots/first_ply_factor"), st.array("hotspots/last_ply_factor")
    zone, section = st.array("model/zone"), st.array("model/section")
    lowest = np.where(np.isnan(first), np.inf, first).min(axis=1)
    out = []
    for i in [int(i) for i in np.argsort(lowest, kind="stable") if np.isfinite(lowest[i])][:limit]:
        j = int(np.argmin(np.where(np.isnan(first[i]), np.inf, first[i])))
        sec = run.sections[int(section[cells[i]])]
        events = []
        for ply, code, mode, status, factor in seq[j, i]:
            if not np.isfinite(factor):
                break
            p = sec.plies[int(ply)]
            wound = " (wound)" if p.wound else ""
            if code < 0:
                what = "fibre check after a matrix failure (σ1 against Xt, Xc)"
            else:
                c = run.criteria[int(code)]
                what = f"{c.name} ({c.modes[int(mode)]})" if 0 <= mode < len(c.modes) else c.name
            events.append(FailureEvent(float(factor), f"{int(ply) + 1}: {degrees(p.angle)}{wound} {p.material}", what,
                                       DISCOUNTS.get(int(status), "")))
        out.append(FailureSequence(int(cells[i]), run.zones[int(zone[cells[i]])].name, st.case_names[j],
                                   float(first[i, j]), float(last[i, j]), tuple(events)))
    return tuple(out)


def _figures(st: StoreReader) -> list:
    from postproc.plots import save_figure
    from postproc.report import Figure

    out = []
    for field, views, caption in REPORT_MAPS:
        f, pic = draw_store_field(st, field, views=views if st.run.summary.worst is not None else ("iso",))
        hidden = [v.name for v in pic.views if v.mark_visible is False]
        note = f" (the worst cell is hidden in the {', '.join(hidden)} view)" if hidden else ""
        out.append(Figure(caption + note, png_bytes(pic.image)))
    for field, caption in _beyond_maps(st):
        f, pic = draw_store_field(st, field, views=("iso",))
        out.append(Figure(caption, png_bytes(pic.image)))
    if st.run.summary.worst is not None:
        fig, info = profile_figure_of(st)
        buf = io.BytesIO()
        save_figure(fig, buf, "png")
        out.append(Figure(f"Through the thickness of the worst cell ({info['cell']}, zone {info['zone']}), case "
                          f"{info['case']}: stresses and the failure index of each criterion", buf.getvalue()))
    return out


def _beyond_maps(st: StoreReader) -> list[tuple[str, str]]:
    """Maps of the progressive analysis and of the misalignment, when the run made them."""
    out = []
    if st.has("cells/first_ply_factor"):
        out += [("first-ply-factor", "First-ply load factor: the lowest over the cases of the factor on the case's "
                                     "mechanical load at which the first ply fails"),
                ("last-ply-factor", "Last-ply load factor: the lowest over the cases of the factor at which the "
                                    "laminate can carry no more")]
    if st.has("cells/misalignment"):
        out.append(("misalignment", "Laminate turn (misalignment tolerance) that governs each cell"))
    return out


def _meta_text(h5, key: str, path: str) -> str:
    """A metadata value of a comparison file: the attribute, or the string dataset ``/meta/KEY`` of a long one."""
    if key in h5.attrs:
        text = h5.attrs[key]
    elif f"meta/{key}" in h5:
        import h5py

        obj = h5[f"meta/{key}"]
        if not isinstance(obj, h5py.Dataset) or obj.shape != () or h5py.check_string_dtype(obj.dtype) is None:
            raise CompareFileError(f"/meta/{key} is not a text value; write the comparison again", path)
        text = obj[()]
    else:
        return ""
    if isinstance(text, bytes):
        text = text.decode("utf-8", "replace")
    if not isinstance(text, str) or len(text) > MAX_SUMMARY:
        raise CompareFileError(f"the comparison's {key} is not text or too large; write the comparison again", path)
    return text


def _json(text: str, key: str, path: str) -> dict:
    try:
        value = json.loads(text)
    except ValueError:
        raise CompareFileError(f"the comparison {key} is missing or not JSON; write the comparison again",
                               path) from None
    if not isinstance(value, dict):
        raise CompareFileError(f"the comparison {key} is not an object; write the comparison again", path)
    return value


#: Inputs a comparison and the results store it is reported with must share (sha256 of the file and its heavy data).
SHARED_INPUTS = ("definition", "mesh", "resultants")


def _digests(entries: dict, role: str) -> list[tuple]:
    """Sorted (sha256, heavy-data sha256s) of the inputs of one role (``resultants`` gathers resultants0, 1, …)."""
    out = []
    for name, e in entries.items():
        if name == role or (role == "resultants" and name.startswith("resultants") and name[10:].isdigit()):
            data = e.get("data_sha256", ()) if isinstance(e, dict) else ()
            out.append((str(e.get("sha256", "")) if isinstance(e, dict) else "",
                        tuple(str(d) for d in ([data] if isinstance(data, str) else data))))
    return sorted(out)


def check_same_inputs(comparison_inputs: dict, run, path: str) -> None:
    """Refuse a comparison made from another definition, mesh or resultants than the store (sha256 digests).

    Raises
    ------
    CompareFileError
        Naming the first input that differs, both digests and the fix.
    """
    store = {i.role: {"sha256": i.sha256, "data_sha256": list(i.data_sha256)} for i in run.provenance.inputs}
    for role in SHARED_INPUTS:
        ours, theirs = _digests(store, role), _digests(comparison_inputs, role)
        if ours != theirs:
            def show(d):
                return ", ".join(s[:12] + "…" for s, _ in d) or "none"

            raise CompareFileError(
                f"the comparison was made from another {role} than the results store {run_store_name(run)} "
                f"(sha256 {show(theirs)} in the comparison, {show(ours)} in the store); report a comparison of "
                "the store's own definition, mesh and resultants (plybridge compare with the inputs of that "
                "recover run)", path)


def run_store_name(run) -> str:
    return f"'{run.title}'" if getattr(run, "title", "") else ""


def read_comparison(path: str | Path, run=None) -> dict:
    """The ``summary`` of a comparison file written by ``plybridge compare -o X.h5`` (docs/compare.md).

    With ``run`` (the results store's :class:`bridge.results.meta.RunMeta`), the comparison must have been made
    from the store's own definition, mesh and resultants (:func:`check_same_inputs`).
    """
    path = str(path)
    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
    except OSError:
        head = HDF5_SIGNATURE                              # open_h5 names what is wrong with the path
    if head != HDF5_SIGNATURE:
        raise CompareFileError("not an HDF5 file; give the file written by plybridge compare -o X.h5", path)
    with open_h5(path, CompareFileError, "a comparison file (HDF5)") as h5:
        if h5.attrs.get("format") != "plybridge-compare":
            raise CompareFileError("not a comparison file (attribute format != 'plybridge-compare'); give the "
                                   "file written by plybridge compare -o X.h5", path)
        summary = _json(_meta_text(h5, "summary", path), "summary", path)
        inputs = _meta_text(h5, "inputs", path) if run is not None else ""
    if run is not None:
        if not inputs:
            raise CompareFileError("the comparison file records no inputs, so it cannot be matched to the results "
                                   "store; write the comparison again with plybridge compare", path)
        check_same_inputs(_json(inputs, "inputs", path), run, path)
    return summary


def report_inputs(st: StoreReader, comparison: dict | None = None, comparison_source: str = "",
                  verification: bool = True, open_details: bool = False):
    """The :class:`postproc.report.ReportInputs` of an open store."""
    from postproc.hotspots import adjacency, clusters
    from postproc.scene import CORNERS
    from postproc.report import ReportInputs

    run = st.run
    margin = st.array("cells/min_margin")
    points, blocks = st.mesh()
    hot = clusters(margin, st.array("model/zone"), adjacency(blocks, len(points), CORNERS))
    s = run.summary
    named = [h.head for h in hot] + [x.cell for group in (s.zones, s.laminates, s.cases, s.criteria) for x in group]
    named += [s.worst.cell] if s.worst else []
    rows = None
    if verification:
        from shells.published import check

        from bridge.recover.published import all_cases

        rows = [check(case) for case in all_cases()]
    return ReportInputs(meta=run, store=st.path, cells=cell_facts(st, named), hot=hot, figures=_figures(st),
                        n_cells=int(margin.size), failing_cells=int(np.sum(margin < 0)), verification=rows,
                        comparison=comparison, comparison_source=comparison_source, open_details=open_details,
                        sequences=failure_sequences(st))


def browser() -> str | None:
    """A headless-capable browser on PATH, or None."""
    return next((p for p in map(shutil.which, BROWSERS) if p), None)


def write_pdf(html_text: str, output: str | Path) -> None:
    """Print an HTML document to PDF with headless chromium (atomically)."""
    exe = browser()
    if exe is None:
        raise InputError(f"--pdf {output}: no chromium on PATH; install chromium, or print the HTML report from a "
                         "browser")
    with tempfile.TemporaryDirectory(prefix="plybridge-pdf-") as work, atomic_path(output, suffix=".pdf") as tmp:
        page = Path(work) / "report.html"
        page.write_text(html_text, encoding="utf-8")
        cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
               "--disable-background-networking", "--disable-component-update", "--disable-sync",
               f"--user-data-dir={Path(work) / 'profile'}", "--no-pdf-header-footer",
               f"--print-to-pdf={tmp}", page.as_uri()]
        proc = subprocess.run(cmd, capture_output=True, text=True, timeout=300, env={**os.environ, "HOME": work})
        if proc.returncode != 0 or not Path(tmp).is_file() or Path(tmp).stat().st_size == 0:
            raise InputError(f"--pdf {output}: chromium could not print the report (exit {proc.returncode})")


def write_report(store_path: str | Path, output: str | Path, compare: str | Path | None = None,
                 pdf: str | Path | None = None, verification: bool = True) -> dict:
    """Write the self-contained HTML report of a store to ``output`` (and a PDF of it), atomically.

    Parameters
    ----------
    store_path : path
        A results store written by ``plybridge recover``.
    output : path
        The ``.html`` file to write.
    compare : path, optional
        A comparison file written by ``plybridge compare -o X.h5``; its summary becomes a section.
    pdf : path, optional
        Also print the report to this PDF with headless chromium.
    verification : bool
        Run the published checks and show them.

    Returns
    -------
    dict
        ``output``, ``pdf`` (only when given), ``min_margin``, ``cell``, ``failing_cells``, ``hot_spots``, ``figures``.
    """
    from postproc.report import build_report

    if not str(output).lower().endswith((".html", ".htm")):
        raise InputError("write an .html report (give -o NAME.html)", str(output))
    if pdf is not None and not str(pdf).lower().endswith(".pdf"):
        raise InputError("write a .pdf file (give --pdf NAME.pdf)", str(pdf))
    with StoreReader(store_path) as st:
        comparison = read_comparison(compare, st.run) if compare is not None else None
        inputs = report_inputs(st, comparison, str(compare or ""), verification)
    text = build_report(inputs)
    write_text(output, text)
    if pdf is not None:
        from dataclasses import replace

        write_pdf(build_report(replace(inputs, open_details=True)), pdf)
    w = inputs.meta.summary.worst
    return {"output": str(output), **({"pdf": str(pdf)} if pdf else {}), "min_margin": w.min_margin if w else None,
            "cell": w.cell if w else None, "failing_cells": inputs.failing_cells, "hot_spots": len(inputs.hot),
            "figures": len(inputs.figures)}
