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
