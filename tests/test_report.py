"""The HTML report: self-contained, escaped, and readable by a real browser.

Check values are the store's own summary (invariants): the report must show what the store says.
"""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from tests.common import assert_one_line_error, run_cli
from tests.test_render import EVIL, build_store


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    store = build_store(tmp_path_factory.getbasetemp())
    out = tmp_path_factory.mktemp("report") / "report.html"
    from bridge.pictures.report import write_report

    write_report(store, out, compare_fragment='<table class="cmp"><tr><td>solver vs plybridge</td></tr></table>')
    return store, out


def test_report_is_self_contained_and_escaped(report):
    store, out = report
    text = out.read_text(encoding="utf-8")
    assert EVIL not in text and "<script" not in text.lower()
    assert html_escaped(EVIL) in text
    assert len(re.findall(r'src="data:image/png;base64,', text)) == 4  # margin, critical ply, mode, profile
    assert not re.search(r'(src|href)="(?!data:)', text)  # nothing fetched from elsewhere
    assert "never replace, review by a qualified engineer" in text and "@media print" in text
    assert 'class="cmp"' in text
    from bridge.results.store import StoreReader

    with StoreReader(store) as st:
        worst = st.run.summary.worst
        sha = st.run.provenance.input("definition").sha256
    assert f"{worst.min_margin:.4g}" in text and sha in text


def html_escaped(s: str) -> str:
    import html

    return html.escape(s, quote=True)


def test_compare_fragment_with_a_script_is_refused(report, tmp_path):
    store, _ = report
    frag = tmp_path / "cmp.html"
    frag.write_text("<p onload=x>hi</p><script>alert(2)</script>", encoding="utf-8")
    out = tmp_path / "r.html"
    assert_one_line_error(run_cli("report", store, "-o", out, "--compare", frag), "script")
    assert not out.exists()


def _chromium() -> str | None:
    return next((p for p in map(shutil.which, ("chromium", "chromium-browser", "google-chrome")) if p), None)


@pytest.mark.skipif(_chromium() is None, reason="no chromium binary on PATH (apt-get install -y chromium)")
def test_report_opens_in_a_browser(report, tmp_path):
    _, out = report
    cmd = [_chromium(), "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}", "--dump-dom", out.resolve().as_uri()]
    dom = subprocess.run(cmd, capture_output=True, text=True, timeout=120).stdout
    assert '<table class="summary">' in dom and "Minimum margin of safety" in dom
    assert len(re.findall(r"<img [^>]*src=\"data:image/png;base64,", dom)) == 4
    assert html_escaped(EVIL) in dom and "<script>alert" not in dom
