"""The HTML report of a results store: metadata and pictures from the store → postproc.report → one file."""

from __future__ import annotations

import io
from pathlib import Path

from shells.errors import InputError

from bridge.atomic import write_text
from bridge.pictures.render import draw_store_field, png_bytes
from bridge.pictures.plots import profile_figure_of
from bridge.results.store import StoreReader

#: Maps in the report: (field, caption).
REPORT_MAPS = (("margin", "Margin of safety, envelope of cases, critical ply"),
               ("critical-ply", "Critical ply (the ply with the lowest margin)"),
               ("mode", "Governing criterion and failure mode"))
MAP_SIZE = (1400, 650)


class CompareFragmentError(InputError):
    """A --compare fragment is not one written by plybridge compare."""


def _figures(st: StoreReader) -> list[tuple[str, bytes]]:
    from postproc.plots import save_figure

    out = []
    for field, caption in REPORT_MAPS:
        f, pic = draw_store_field(st, field, views=("iso", "worst"), size=MAP_SIZE)
        out.append((caption, png_bytes(pic.image)))
    fig = profile_figure_of(st)
    buf = io.BytesIO()
    save_figure(fig, buf, "png")
    worst = st.run.summary.worst
    out.append((f"Through-thickness stresses and failure indices of the worst cell ({worst.cell if worst else ''}), "
                f"case {worst.case if worst else ''}", buf.getvalue()))
    return out


def report_inputs(st: StoreReader, compare_fragment: str | None = None):
    """The :class:`postproc.report.ReportInputs` of an open store."""
    from postproc.report import ReportInputs

    return ReportInputs(meta=st.run, store=st.path, figures=_figures(st), compare_fragment=compare_fragment)


def write_report(store_path: str | Path, output: str | Path, compare_fragment: str | None = None) -> None:
    """Write the self-contained HTML report of a store to ``output`` atomically.

    Parameters
    ----------
    store_path : path
        A results store written by ``plybridge recover``.
    output : path
        The ``.html`` file to write.
    compare_fragment : str, optional
        HTML written by ``plybridge compare``, inserted as its own section (refused if it holds a script).
    """
    from postproc.report import build_report, check_fragment

    if compare_fragment is not None:
        try:
            check_fragment(compare_fragment)
        except ValueError as err:
            raise CompareFragmentError(str(err)) from None
    with StoreReader(store_path) as st:
        text = build_report(report_inputs(st, compare_fragment))
    write_text(output, text)
