"""The package layout of docs/architecture.md: imports go one way, modules stay small, bridge/ is grouped."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
PACKAGES = ("shells", "postproc", "bridge")
#: Each package may import only the packages listed here (besides itself).
ALLOWED = {"shells": set(), "postproc": {"shells"}, "bridge": {"shells", "postproc"}}
MAX_LINES = 400
MAX_LOOSE_BRIDGE_MODULES = 6


def _modules(package: str) -> list[Path]:
    return sorted((ROOT / package).rglob("*.py"))


def _imported_packages(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"), str(path))
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.update(alias.name.split(".")[0] for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            out.add(node.module.split(".")[0])
    return out & set(PACKAGES)


@pytest.mark.parametrize("package", PACKAGES)
def test_imports_go_one_way(package):
    wrong = {str(p.relative_to(ROOT)): sorted(_imported_packages(p) - ALLOWED[package] - {package})
             for p in _modules(package)}
    assert not {k: v for k, v in wrong.items() if v}


@pytest.mark.parametrize("package", PACKAGES)
def test_modules_are_small(package):
    long = {str(p.relative_to(ROOT)): n for p in _modules(package)
            if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_LINES}
    assert not long, f"split these modules by what they hold: {long}"


def test_bridge_is_grouped_by_data_flow():
    loose = [p.name for p in (ROOT / "bridge").glob("*.py") if p.name != "__init__.py"]
    assert len(loose) <= MAX_LOOSE_BRIDGE_MODULES, loose
    for sub in ("definition", "mesh", "model", "recover", "results", "pictures", "compare", "commands", "demo"):
        assert (ROOT / "bridge" / sub / "__init__.py").is_file(), sub


def test_developers_guide_names_every_loose_bridge_module():
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    missing = [p.name for p in (ROOT / "bridge").glob("*.py") if p.name != "__init__.py" and f"`{p.name}`" not in text]
    assert not missing, f"add these to the layout section of DEVELOPERS.md: {missing}"


def test_the_caution_and_the_wrinkling_coefficient_are_declared_once():
    """The caution sentence (and the design wrinkling coefficient) live in shells/defaults.py; code elsewhere
    imports them, never restates them (a restated copy drifts)."""
    from shells.defaults import CAUTION

    needle = " ".join(CAUTION.split()[3:8])                  # "never replace, review by a"
    restated = []
    for package in PACKAGES:
        for path in _modules(package):
            words = " ".join(path.read_text(encoding="utf-8").replace("#", " ").replace("'", " ").split())
            if needle in words and path.name != "defaults.py":
                restated.append(str(path.relative_to(ROOT)))
            if path.name != "defaults.py":
                tree = ast.parse(path.read_text(encoding="utf-8"))
                restated += [f"{path.relative_to(ROOT)}: {t.id}" for node in ast.walk(tree)
                             if isinstance(node, ast.Assign) and isinstance(node.value, ast.Constant)
                             and node.value.value == 0.5 for t in node.targets
                             if isinstance(t, ast.Name) and "WRINKLING" in t.id]
    assert not restated, restated
