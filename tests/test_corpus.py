"""The bad-input corpus (tests/corpus/cases.toml): every broken input ends cleanly.

For each entry ``plybridge recover`` must exit with the expected code (2 for bad
input), print exactly one line on stderr that holds the entry's needles (the bad
file's name, the entry, the fix), print no traceback, and leave nothing at the
output path — not even a temporary or partial file in the output folder.
"""

from __future__ import annotations

import shutil
import tomllib
from pathlib import Path

import pytest
from click.testing import CliRunner

from bridge.cli import main
from tests.common import assert_one_line_error, run_cli
from tests.corpus.models import HERE, broken_input, write_model

CASES = tomllib.loads((HERE / "cases.toml").read_text(encoding="utf-8"))["case"]
KEYS = {"name", "what", "definition", "mesh", "resultants", "options", "code", "needles", "xfail"}
#: A few entries also run in a fresh interpreter, exactly as a user would.
SUBPROCESS = ("def-toml-syntax", "mesh-degenerate", "res-truncated", "def-layup-repeat-absurd")


@pytest.fixture(scope="session")
def good_model(tmp_path_factory) -> dict[str, Path]:
    return write_model(tmp_path_factory.mktemp("corpus-model"))


def _generated(name: str, folder: Path, n_cells: int) -> Path:
    if name == "def-latin1":
        path = folder / "latin1.toml"
        path.write_bytes((HERE / "base.toml").read_bytes().replace(b'title = "corpus plate"', b'title = "caf\xe9"'))
        return path
    if name == "def-huge":
        path = folder / "huge.toml"
        path.write_bytes((HERE / "base.toml").read_bytes() + b"#" * (4 * 2 ** 20))
        return path
    return broken_input(name, folder, n_cells)


def _inputs(case: dict, good: dict[str, Path], folder: Path) -> tuple[list[str], str]:
    """Command arguments and the name of the bad file (empty for option entries)."""
    chosen, bad = {}, ""
    for role in ("definition", "mesh", "resultants"):
        value = case.get(role)
        if value is None:
            chosen[role] = good[role]
            continue
        chosen[role] = _generated(value[1:], folder, 600) if value.startswith("@") else HERE / value
        bad = bad or chosen[role].name
    return [str(chosen[r]) for r in ("definition", "mesh", "resultants")], bad


def test_the_corpus_is_well_formed():
    assert len(CASES) >= 40
    names = [c["name"] for c in CASES]
    assert len(set(names)) == len(names)
    for case in CASES:
        assert set(case) <= KEYS and {"name", "what", "code", "needles"} <= set(case), case["name"]
        for role in ("definition", "mesh", "resultants"):
            value = case.get(role, "@")
            assert value.startswith("@") or (HERE / value).is_file() or "no-such" in value, (case["name"], value)


def _param(case: dict):
    """An entry as a pytest parameter; ``xfail`` entries are known bugs in files this suite does not own."""
    marks = [pytest.mark.xfail(reason=case["xfail"], strict=True)] if "xfail" in case else []
    return pytest.param(case, id=case["name"], marks=marks)


@pytest.mark.parametrize("case", [_param(c) for c in CASES])
def test_bad_input_ends_cleanly(case, good_model, tmp_path):
    folder = tmp_path / "inputs"
    folder.mkdir()
    args, bad = _inputs(case, good_model, folder)
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    output = out_dir / "RESULT.h5"
    argv = ["recover", *args, "-o", str(output), "--quiet", *case.get("options", [])]
    result = CliRunner().invoke(main, argv)
    assert not isinstance(result.exception, Exception) or isinstance(result.exception, SystemExit), (
        result.exception)
    assert result.exit_code == case["code"], (result.exit_code, result.stderr)
    assert "Traceback" not in result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    for needle in case["needles"]:
        assert needle.replace("{file}", bad) in lines[0], (needle, lines[0])
    left = sorted(p.name for p in out_dir.iterdir())
    if case["code"] == 2:
        assert left == [], left
    else:
        from bridge.results.store import StoreReader

        assert left == ["RESULT.h5", "RESULT.h5.hotspots.csv"], left
        with StoreReader(output) as st:
            assert st.array("cells/flagged").sum() == 3


@pytest.mark.parametrize("name", SUBPROCESS)
def test_bad_input_in_a_fresh_interpreter(name, good_model, tmp_path):
    case = next(c for c in CASES if c["name"] == name)
    args, bad = _inputs(case, good_model, tmp_path)
    output = tmp_path / "out" / "RESULT.h5"
    output.parent.mkdir()
    proc = run_cli("recover", *args, "-o", output, *case.get("options", []), timeout=120)
    assert_one_line_error(proc, *(n.replace("{file}", bad) for n in case["needles"]))
    assert proc.stdout == ""
    assert list(output.parent.iterdir()) == []


def test_a_failed_run_keeps_the_previous_store(good_model, tmp_path):
    """A bad input on a second run leaves the first run's store byte for byte."""
    output = tmp_path / "RESULT.h5"
    shutil.copy(good_model["resultants"], output)  # stands for an earlier store: any file must survive
    before = output.read_bytes()
    bad = HERE / "defs" / "layup_empty.toml"
    result = CliRunner().invoke(main, ["recover", str(bad), str(good_model["mesh"]), str(good_model["resultants"]),
                                       "-o", str(output), "--quiet"])
    assert result.exit_code == 2
    assert output.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["RESULT.h5"]
