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


def _figures(st: StoreReader) -> list:
    from postproc.plots import save_figure
    from postproc.report import Figure

    out = []
    for field, views, caption in REPORT_MAPS:
        f, pic = draw_store_field(st, field, views=views if st.run.summary.worst is not None else ("iso",))
        hidden = [v.name for v in pic.views if v.mark_visible is False]
        note = f" (the worst cell is hidden in the {', '.join(hidden)} view)" if hidden else ""
        out.append(Figure(caption + note, png_bytes(pic.image)))
    if st.run.summary.worst is not None:
        fig, info = profile_figure_of(st)
        buf = io.BytesIO()
        save_figure(fig, buf, "png")
        out.append(Figure(f"Through the thickness of the worst cell ({info['cell']}, zone {info['zone']}), case "
                          f"{info['case']}: stresses and the failure index of each criterion", buf.getvalue()))
    return out


def read_comparison(path: str | Path) -> dict:
    """The ``summary`` of a comparison file written by ``plybridge compare -o X.h5`` (docs/compare.md)."""
    import h5py

    path = str(path)
    try:
        with h5py.File(path, "r", locking=False) as h5:
            if h5.attrs.get("format") != "plybridge-compare":
                raise CompareFileError("not a comparison file (attribute format != 'plybridge-compare'); give the "
                                       "file written by plybridge compare -o X.h5", path)
            text = h5.attrs.get("summary", "")
    except FileNotFoundError:
        raise CompareFileError("no such file; give the file written by plybridge compare -o X.h5", path) from None
    except OSError:
        raise CompareFileError("not an HDF5 file; give the file written by plybridge compare -o X.h5", path) from None
    if isinstance(text, bytes):
        text = text.decode("utf-8", "replace")
    if not isinstance(text, str) or len(text) > MAX_SUMMARY:
        raise CompareFileError("the comparison summary is missing or too large; write the comparison again", path)
    try:
        summary = json.loads(text)
    except ValueError:
        raise CompareFileError("the comparison summary is not JSON; write the comparison again", path) from None
    if not isinstance(summary, dict):
        raise CompareFileError("the comparison summary is not an object; write the comparison again", path)
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
                        comparison=comparison, comparison_source=comparison_source, open_details=open_details)


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
    comparison = read_comparison(compare) if compare is not None else None
    with StoreReader(store_path) as st:
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
