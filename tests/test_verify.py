"""The built-in published cases (bridge.recover.published.all_cases): the same list ``plybridge verify`` runs.

Every value, its source (the publication) and its tolerance are in shells/published.py,
shells/published_sections.py and bridge/recover/published.py; the test parametrises over that one list.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from bridge.cli import main
from bridge.recover.published import all_cases
from shells.published import Published, check

PUBLISHED = all_cases()


@pytest.mark.parametrize("case", PUBLISHED, ids=lambda c: c.case)
def test_published_case(case: Published):
    row = check(case)
    assert row["pass"], row
    assert case.source and case.quantity and case.tolerance > 0


def test_cases_are_unique_and_cover_the_sources():
    names = [c.case for c in PUBLISHED]
    assert len(set(names)) == len(names)
    text = " ".join(f"{c.source} {c.quantity}" for c in PUBLISHED)
    for source in ("Kaw", "Tsai & Hahn", "Pagano", "Rolfes & Rohwer", "lbf-in", "held", "von Mises", "Allen",
                   "recover"):
        assert source in text


def test_verify_command_table_and_json():
    out = CliRunner().invoke(main, ["verify"])
    assert out.exit_code == 0, out.output
    lines = out.output.splitlines()
    assert lines[0].split()[:3] == ["case", "source", "quantity"]
    assert sum(line.rstrip().endswith("yes") for line in lines) == len(PUBLISHED)
    js = CliRunner().invoke(main, ["verify", "--json"])
    rows = json.loads(js.output)
    assert js.exit_code == 0 and [r["case"] for r in rows] == [c.case for c in PUBLISHED]
    assert all(r["pass"] for r in rows)


def test_a_failing_case_fails_the_check():
    wrong = Published("wrong", "a deliberately wrong value", "Q11", 1.0, 1e-3, lambda: 2.0)
    assert not check(wrong)["pass"]
