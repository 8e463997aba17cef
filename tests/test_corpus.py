"""The bad-input corpus (tests/corpus/cases.toml): every broken, hostile or colliding input ends cleanly.

Each entry runs one ``plybridge`` command in this process (click's runner: the CLI path, error handling
included, without a new interpreter per entry) in a fresh folder holding copies of the inputs. It must
exit with the expected code (2 for bad input), print the expected number of stderr lines (one for an
error) holding the entry's needles (the bad file, the entry, the fix), print no traceback, and leave every
file as it was: inputs unchanged byte for byte (hashes before and after), nothing new in the output folder
— or, for the few entries that succeed, exactly the outputs they list.
"""

from __future__ import annotations

import collections
import hashlib
import os
import re
import shutil
import tomllib
from pathlib import Path

import pytest
from click.testing import CliRunner

from bridge.cli import main
from tests.common import assert_one_line_error, run_cli
from tests.corpus import hostile_files  # noqa: F401  (registers the mesh, store and folder generators)
from tests.corpus.hostile import GENERATORS, SETUPS
from tests.corpus.models import HERE, broken_input, write_model

CASES = tomllib.loads((HERE / "cases.toml").read_text(encoding="utf-8"))["case"]
KEYS = {"name", "what", "class", "command", "args", "definition", "mesh", "resultants", "options", "patch",
        "append", "setup", "code", "needles", "lines", "outputs", "xfail"}
CLASSES = ("definition", "mesh", "resultants", "options", "data-loss", "resources", "resume", "hdf5", "xdmf",
           "bounds", "strings", "one-line", "side-files", "mesh-notes")
#: A few entries also run in a fresh interpreter, exactly as a user would.
SUBPROCESS = ("def-toml-syntax", "mesh-degenerate", "res-truncated", "def-layup-repeat-absurd",
              "loss-recover-onto-resultants", "h5-external-link-passwd", "xdmf-heavy-data-absolute")
DEFAULT_ARGS = ["{definition}", "{mesh}", "{resultants}", "-o", "{out}/RESULT.h5", "--quiet"]
_PLACE = re.compile(r"\{(gen|corpus):([^}]+)\}")


@pytest.fixture(scope="session")
def good_model(tmp_path_factory) -> dict[str, Path]:
    """The valid inputs (600-cell plate) and their results store."""
    from bridge.recover.run import run_recover

    good = write_model(tmp_path_factory.mktemp("corpus-model"))
    good["store"] = good["definition"].parent / "store.h5"
    run_recover(str(good["definition"]), str(good["mesh"]), [str(good["resultants"])], str(good["store"]))
    return good


def _generated(name: str, folder: Path, good: dict) -> Path:
    if name in GENERATORS:
        return GENERATORS[name](folder, good)
    if name == "def-latin1":
        path = folder / "latin1.toml"
        path.write_bytes((HERE / "base.toml").read_bytes().replace(b'title = "corpus plate"', b'title = "caf\xe9"'))
        return path
    if name == "def-huge":
        path = folder / "huge.toml"
        path.write_bytes((HERE / "base.toml").read_bytes() + b"#" * (4 * 2 ** 20))
        return path
    if name == "def-100001-cases":
        path = folder / "many-cases.toml"
        path.write_text((HERE / "base.toml").read_text() + "\n[cases]\n"
                        + "".join(f"c{k} = {{ step = 1 }}\n" for k in range(100_001)), encoding="utf-8")
        return path
    return broken_input(name, folder, 600)


def _copy(src: Path, folder: Path) -> Path:
    dst = folder / src.name
    if src.with_suffix(".h5") != src and src.suffix in (".xdmf", ".xmf") and src.with_suffix(".h5").exists():
        shutil.copy(src.with_suffix(".h5"), folder / src.with_suffix(".h5").name)
    shutil.copy(src, dst)
    return dst


_REPEAT = re.compile(r"\{repeat:(.):(\d+)\}")


def _expand(text: str) -> str:
    """``{repeat:X:5000}`` → 5000 X (keeps long hostile strings out of cases.toml)."""
    return _REPEAT.sub(lambda m: m.group(1) * int(m.group(2)), text)


def _definition(case: dict, base: Path, folder: Path) -> Path:
    text = base.read_text(encoding="utf-8")
    for old, new in case.get("patch", []):
        assert old in text, (case["name"], old)
        text = text.replace(old, _expand(new))
    path = folder / "def.toml"
    path.write_text(text + _expand(case.get("append", "")), encoding="utf-8")
    return path


def _prepare(case: dict, good: dict, work: Path) -> tuple[list[str], str, dict]:
    """Copy and generate the inputs; return (argv, name of the bad file, context)."""
    inp, out = work / "in", work / "out"
    inp.mkdir()
    out.mkdir()
    paths = {role: _copy(good[role], inp) for role in ("definition", "mesh", "resultants")}
    bad = ""
    for role in ("definition", "mesh", "resultants"):
        value = case.get(role)
        if value is not None:
            paths[role] = _generated(value[1:], inp, good) if value.startswith("@") else _copy(HERE / value, inp) \
                if (HERE / value).exists() else HERE / value
            bad = bad or paths[role].name
    if "patch" in case or "append" in case:
        paths["definition"] = _definition(case, paths["definition"], inp)
        bad = bad or "def.toml"
    ctx = {"in": inp, "out": out, "store": good["store"], "good": good, **paths}

    def fill(arg: str) -> str:
        nonlocal bad

        def sub(m):
            nonlocal bad
            p = _generated(m.group(2), inp, good) if m.group(1) == "gen" else _copy(HERE / m.group(2), inp)
            bad = bad or p.name
            return str(p)

        arg = _PLACE.sub(sub, arg)
        if "{store}" in arg and not (inp / "store.h5").exists():
            shutil.copy(good["store"], inp / "store.h5")
        return arg.format(definition=paths["definition"], mesh=paths["mesh"], resultants=paths["resultants"],
                          store=inp / "store.h5", out=out, **{"in": inp})

    args = case.get("args", DEFAULT_ARGS)
    argv = [case.get("command", "recover"), *(fill(_expand(a)) for a in args),
            *(fill(_expand(o)) for o in case.get("options", []))]
    return argv, bad, ctx


def snapshot(folder: Path) -> dict[str, str]:
    """Every entry under ``folder``: file hash, link target or folder mark (links are not followed)."""
    out = {}
    for root, dirs, files in os.walk(folder):
        for name in dirs + files:
            p = Path(root) / name
            rel = str(p.relative_to(folder))
            if p.is_symlink():
                out[rel] = "link:" + os.readlink(p)
            elif p.is_dir():
                out[rel] = "dir"
            else:
                out[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
    return out


def test_the_corpus_is_well_formed():
    assert len(CASES) >= 150
    names = [c["name"] for c in CASES]
    assert len(set(names)) == len(names)
    for case in CASES:
        assert set(case) <= KEYS and {"name", "what", "class", "code", "needles"} <= set(case), case["name"]
        assert case["class"] in CLASSES, case["name"]
        for role in ("definition", "mesh", "resultants"):
            value = case.get(role, "@")
            assert value.startswith("@") or (HERE / value).is_file() or "no-such" in value, (case["name"], value)
            if value.startswith("@"):
                assert value == "@" or value[1:] in GENERATORS or value[1:].startswith(("res-", "mesh-", "def-"))
        assert case.get("setup") is None or case["setup"] in SETUPS, case["name"]
    counts = collections.Counter(c["class"] for c in CASES)
    assert set(counts) == set(CLASSES), counts


def _param(case: dict):
    """An entry as a pytest parameter; ``xfail`` entries are known bugs in files this suite does not own."""
    marks = [pytest.mark.xfail(reason=case["xfail"], strict=True)] if "xfail" in case else []
    return pytest.param(case, id=case["name"], marks=marks)


@pytest.mark.parametrize("case", [_param(c) for c in CASES])
def test_bad_input_ends_cleanly(case, good_model, tmp_path):
    argv, bad, ctx = _prepare(case, good_model, tmp_path)
    cleanup = SETUPS[case["setup"]](ctx) if case.get("setup") else None
    before = snapshot(tmp_path)
    try:
        result = CliRunner().invoke(main, argv)
    finally:
        if cleanup:
            cleanup()
    assert not isinstance(result.exception, Exception) or isinstance(result.exception, SystemExit), (
        result.exception)
    assert result.exit_code == case["code"], (result.exit_code, result.stderr)
    assert "Traceback" not in result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == case.get("lines", 1 if case["code"] == 2 or case["needles"] else 0), result.stderr
    for needle in case["needles"]:
        assert needle.replace("{file}", bad) in lines[0], (needle, lines[0])
    after = snapshot(tmp_path)
    if case["code"] == 2:
        assert result.stdout == ""
        assert after == before   # every input unchanged, nothing new (no temporary, partial or lock file)
    else:
        assert {k: v for k, v in after.items() if not k.startswith("out")} == \
            {k: v for k, v in before.items() if not k.startswith("out")}   # inputs unchanged
        expected = case.get("outputs", ["RESULT.h5", "RESULT.h5.hotspots.csv"])
        assert sorted(p.name for p in ctx["out"].iterdir()) == sorted(expected)


@pytest.mark.parametrize("name", SUBPROCESS)
def test_bad_input_in_a_fresh_interpreter(name, good_model, tmp_path):
    case = next(c for c in CASES if c["name"] == name)
    argv, bad, ctx = _prepare(case, good_model, tmp_path)
    before = snapshot(tmp_path)
    proc = run_cli(*argv, timeout=120)
    assert_one_line_error(proc, *(n.replace("{file}", bad) for n in case["needles"]))
    assert proc.stdout == ""
    assert snapshot(tmp_path) == before


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


def class_counts() -> dict[str, int]:
    """Entries per class (the closing note's table)."""
    return dict(collections.Counter(c["class"] for c in CASES))
