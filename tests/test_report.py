"""The HTML report, read back by a real browser (headless chromium): escaped, script-free, complete.

Check values are the store's own metadata and summary (invariants: the report must show what the store says),
the published checks' own list (the one plybridge verify runs), and the injection strings of the hostile-input campaign.
"""

from __future__ import annotations

import html
import json
import re
import shutil
import subprocess
from pathlib import Path

import h5py
import pytest

from tests.common import assert_one_line_error, run_cli
from tests.sparbox import spar_store
from tests.test_render import EVIL, build_store

#: Injection strings: each would run script in a page that inserted it as HTML.
PAYLOADS = ('<svg/onload=document.title="RAN-svg">', '<img src="x"onerror=document.title="RAN-img">',
            '<a href="&#106;avascript:document.title=\'RAN-link\'">click</a>', "<script>document.title='RAN'</script>",
            '"><iframe src=javascript:alert(1)>')


def _chromium() -> str | None:
    return next((p for p in map(shutil.which, ("chromium", "chromium-browser", "google-chrome")) if p), None)


needs_chromium = pytest.mark.skipif(_chromium() is None, reason="no chromium binary on PATH (apt-get install chromium)")


def dump_dom(page: Path, profile: Path) -> str:
    """The DOM of a page after loading it in headless chromium (scripts would have run by then)."""
    cmd = [_chromium(), "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={profile}", "--virtual-time-budget=2000", "--dump-dom", page.resolve().as_uri()]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120).stdout


def comparison_file(path: Path, summary: dict, store: Path) -> Path:
    """A comparison file as plybridge compare writes it (format attribute, JSON summary and the inputs' digests,
    here those of ``store``'s own run)."""
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        inputs = {i.role: {"path": i.path, "sha256": i.sha256, "data_sha256": list(i.data_sha256)}
                  for i in st.run.provenance.inputs}
    with h5py.File(path, "w") as h5:
        h5.attrs["format"] = "plybridge-compare"
        h5.attrs["summary"] = json.dumps(summary)
        h5.attrs["inputs"] = json.dumps({**inputs, "solver_plies0": {"path": "plies.vtu", "sha256": "0" * 64}})
    return path


def hostile_summary() -> dict:
    evil = " ".join(PAYLOADS)
    return {"verdict": evil, "quantity": evil, "tolerance": 1e-3, "max_discrepancy": 0.5, "note": evil,
            "fraction_cells_within": 0.25, "compared_values": 12,
            "zones": {evil: {"cells": 3, "max_discrepancy": 0.5, "within": 0.0}},
            "plies": [{"zone": evil, "ply": 1, "component": evil, "scale": 1.0, "max_abs": 1.0, "max_rel": 0.5,
                       "within": 0.0}],
            "worst_cells": [{"cell": 0, "zone": evil, "discrepancy": 0.5, "case": evil, "ply": 1, "point": evil,
                             "component": evil}],
            "diagnosis": [{"zone": evil, "explained": [{"name": evil, "explanation": evil, "fix": evil,
                                                         "residual": 0.0, "removed": 1.0}]}],
            "coverage": {"checked": 16, "total": 24, "fraction": 2 / 3, "text": "16 of 24 ply points checked",
                         "zones": {evil: {"checked": 2, "total": 24, "plies_checked": [1, 8], "text": evil}}},
            "skipped_cases": [evil], "uncovered_later_key": [{"zone": evil, "cells": 2}]}


@pytest.fixture(scope="module")
def plate_report(tmp_path_factory):
    store = build_store(tmp_path_factory.getbasetemp())
    folder = tmp_path_factory.mktemp("report")
    cmp = comparison_file(folder / "cmp.h5", hostile_summary(), store)
    out = folder / "report.html"
    proc = run_cli("report", store, "-o", out, "--compare", cmp)
    assert proc.returncode == 0, proc.stderr
    return store, out, proc


@pytest.fixture(scope="module")
def spar_report(tmp_path_factory):
    store = spar_store(tmp_path_factory.getbasetemp())
    out = tmp_path_factory.mktemp("spar-report") / "spar.html"
    proc = run_cli("report", store, "-o", out, "--json")
    assert proc.returncode == 0, proc.stderr
    return store, out, json.loads(proc.stdout)


def test_report_is_self_contained_and_escaped(plate_report):
    store, out, proc = plate_report
    text = out.read_text(encoding="utf-8")
    assert EVIL not in text and "<script" not in text.lower() and "<svg" not in text.lower()
    assert html.escape(EVIL, quote=True) in text
    assert not re.search(r'(src|href)="(?!data:)', text)  # nothing fetched from elsewhere
    assert "never replace, review by a qualified engineer" in text and "@media print" in text
    keys = [line.split("\t")[0] for line in proc.stdout.splitlines()]
    assert "pdf" not in keys and len(keys) == len(set(keys))     # no empty pdf line without --pdf
    policy = re.search(r'http-equiv="Content-Security-Policy" content="([^"]+)"', text).group(1)
    assert "script-src 'none'" in policy and "default-src 'none'" in policy and "img-src data:" in policy
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        worst = st.run.summary.worst
        sha = st.run.provenance.input("definition").sha256
    from postproc.numbers import sig

    assert sig(worst.min_margin) in text and sha in text
    assert proc.stdout.startswith(f"output\t{out}\n")


@needs_chromium
def test_no_injected_element_or_script_in_the_browser(plate_report, tmp_path):
    """The payloads of the comparison file are text in the DOM: no element from them, no script run."""
    _, out, _ = plate_report
    dom = dump_dom(out, tmp_path / "profile")
    assert "Comparison with the solver" in dom and "16 of 24 ply points checked" in dom
    assert "uncovered_later_key" in dom                     # a key this version does not know, shown generically
    assert "RAN" not in re.search(r"<title>(.*?)</title>", dom, re.S).group(1)
    for tag in ("<svg", "<img src=\"x\"", "<iframe", "<a href=\"&", "<a href=\"javascript", "<script"):
        assert tag not in dom.lower(), tag              # escaped, a payload reads "&lt;svg…": text, no element
    assert "&lt;svg/onload=" in dom and "&lt;img src=" in dom


@needs_chromium
def test_the_page_policy_stops_a_script_that_got_in(plate_report, tmp_path):
    """Defence in depth: even a script inserted into the page (escaping bypassed) does not run under its policy."""
    _, out, _ = plate_report
    tampered = tmp_path / "tampered.html"
    text = out.read_text(encoding="utf-8").replace(
        "<body>", "<body><script>document.title='RAN'</script><img src=x onerror=\"document.title='RAN2'\">", 1)
    tampered.write_text(text, encoding="utf-8")
    dom = dump_dom(tampered, tmp_path / "profile")
    assert "RAN" not in re.search(r"<title>(.*?)</title>", dom, re.S).group(1)


def test_a_file_that_is_not_a_comparison_is_refused(plate_report, tmp_path):
    store, _, _ = plate_report
    html_fragment = tmp_path / "frag.html"
    html_fragment.write_text("<p onload=x>hi</p>", encoding="utf-8")
    out = tmp_path / "r.html"
    assert_one_line_error(run_cli("report", store, "-o", out, "--compare", html_fragment), "plybridge compare -o")
    other = tmp_path / "other.h5"
    with h5py.File(other, "w") as h5:
        h5.attrs["format"] = "something-else"
    assert_one_line_error(run_cli("report", store, "-o", out, "--compare", other), "not a comparison file")
    assert not out.exists()


def _cells(dom: str, table_after: str) -> list[list[str]]:
    """Rows (cell texts) of the first table after the heading text ``table_after``."""
    part = dom.split(table_after, 1)[1]
    body = part.split("<tbody>", 1)[1].split("</tbody>", 1)[0]
    return [[re.sub(r"<[^>]+>", "", c) for c in re.findall(r"<td[^>]*>(.*?)</td>", row, re.S)]
            for row in body.split("</tr>") if "<td" in row]


@needs_chromium
def test_spar_report_reads_as_a_checker_needs(spar_report, tmp_path):
    from bridge.recover.published import all_cases

    from bridge.results.store import StoreReader

    store, out, summary = spar_report
    dom = dump_dom(out, tmp_path / "profile")
    with StoreReader(store) as st:
        run = st.run
    # Per-zone table: every zone, its governing ply (angle and material), case, criterion and mode.
    zones = _cells(dom, "<h3>By zone</h3>")
    assert [r[0] for r in zones] == [z.name for z in run.zones]
    for row in zones:
        assert re.match(r"\d+: −?\d+° \S+", row[5]) and row[6] in run.case_names and "(" in row[7]
    # Hot spots: worst places per zone, with coordinates in the length unit.
    assert "x [mm]" in dom and "head cell" in dom
    hot = _cells(dom, "<h2>Hot spots</h2>")
    assert {r[0] for r in hot} == {z.name for z in run.zones} and len(hot) <= 3 * len(run.zones)
    # Only failing margins are marked: every marked cell is negative, and the cold soak's ΔT is not marked.
    marked = re.findall(r'<td class="num fail"[^>]*>(.*?)</td>', dom)
    assert marked and all(v.startswith("−") for v in marked)
    assert "−60.00" in dom and not re.search(r'class="num fail"[^>]*>−60.00<', dom)
    # Materials as tables with units, their source, the knockdown breakdown; layups as written, plies folded.
    assert dom.count('<div class="material">') == 3 and "Source: invented for the plybridge tests" in dom
    assert "<td>environment</td>" in dom and "<td>damage</td>" in dom and "<td>MPa</td>" in dom
    assert "[0/0/45/0/0/-45/0/0/90/0/0/45/0/0/-45/0/0]s" in dom and dom.count("<details") >= 4
    assert "combination: 1 × flap-up + 0.8 × torsion" in dom
    # A core's default zero in-plane moduli are said once, not listed as data; defaults carry their units.
    assert "In-plane moduli E1 = E2 = 0: the core carries no in-plane load." in dom
    assert "<td>in-plane modulus along 1 (ribbon)</td>" not in dom
    assert re.search(r"S_T = [0-9.]+ MPa from the fracture plane at alpha0 = 53°", dom)
    assert "ΔT [°C]" in dom and "pressure [MPa]" in dom
    # Settings as a table; the verification summary; maps one per row, full width; the caution twice.
    assert "<h2>Settings</h2>" in dom and "face wrinkling coefficient [-]" in dom
    n = len(all_cases())
    assert f"{n} of {n} published checks" in dom
    assert dom.count("<figure>") == summary["figures"] == 4 and "figure img { width: 100%" in dom
    assert dom.count("qualified engineer") >= 2
    # Four significant figures: the worst margin as the summary prints it.
    from postproc.numbers import sig

    assert sig(summary["min_margin"]) in dom


@needs_chromium
def test_report_prints_to_pdf(plate_report, tmp_path):
    store, _, _ = plate_report
    out, pdf = tmp_path / "r.html", tmp_path / "r.pdf"
    proc = run_cli("report", store, "-o", out, "--pdf", pdf)
    assert proc.returncode == 0, proc.stderr
    assert pdf.read_bytes()[:5] == b"%PDF-" and f"pdf\t{pdf}\n" in proc.stdout


def test_units_follow_the_unit_system(tmp_path):
    """In lbf-in every quantity is labelled psi, in or °F (the run's unit labels), none with a generic unit."""
    import numpy as np

    from bridge.mesh.formats import write_mesh
    from bridge.pictures.report import report_inputs
    from bridge.recover.resultants import write_resultants_h5
    from bridge.results.store import StoreReader
    from postproc.report import build_report
    from tests.meshes import flat_plate
    from tests.test_render import DEFINITION, RESULTANTS

    text = DEFINITION.replace('units = "N-mm"', 'units = "lbf-in"').replace("[analysis]\n", "[analysis]\n"
                                                                         "check_ranges = false\n")
    (tmp_path / "def.toml").write_text(text, encoding="utf-8")   # the labels are checked, not the values
    write_mesh(tmp_path / "plate.vtu", flat_plate(), {"block": np.repeat(np.array([0, 1], dtype=np.int32), 6)})
    write_resultants_h5(tmp_path / "res.h5", ["a", "b"], np.repeat(RESULTANTS[:, None, :], 12, axis=1))
    proc = run_cli("recover", tmp_path / "def.toml", tmp_path / "plate.vtu", tmp_path / "res.h5", "-o",
                   tmp_path / "s.h5", "--quiet")
    assert proc.returncode == 0, proc.stderr
    with StoreReader(tmp_path / "s.h5") as st:
        text = re.sub(r"base64,[^\"]*", "", build_report(report_inputs(st, verification=False)))
    for label in ("ΔT [°F]", "pressure [psi]", "thickness [in]", "x [in]", "<td>psi</td>", "<td>1/°F</td>"):
        assert label in text, label
    assert "length]" not in text and "[N-mm" not in text and "cte" not in text


@pytest.mark.parametrize("which", ["definition", "mesh", "resultants", "no-inputs"])
def test_a_comparison_of_other_inputs_is_refused(plate_report, tmp_path, which):
    """A comparison made from another definition, mesh or resultants than the store is not shown as its check."""
    store, _, _ = plate_report
    cmp = comparison_file(tmp_path / "cmp.h5", hostile_summary(), store)
    with h5py.File(cmp, "a") as h5:
        inputs = json.loads(h5.attrs["inputs"])
        if which == "no-inputs":
            del h5.attrs["inputs"]
        else:
            role = next(r for r in inputs if r.startswith(which))
            inputs[role]["sha256"] = "f" * 64
            h5.attrs["inputs"] = json.dumps(inputs)
    out = tmp_path / "r.html"
    need = "records no inputs" if which == "no-inputs" else f"made from another {which} than the results store"
    assert_one_line_error(run_cli("report", store, "-o", out, "--compare", cmp), "cmp.h5", need)
    assert not out.exists()
