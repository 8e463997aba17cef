"""Shared test helpers."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

os.environ.setdefault("NUMBA_CACHE_DIR", str(Path(__file__).resolve().parent.parent / ".numba-cache"))
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


@pytest.fixture
def write_definition(tmp_path):
    """Write a definition text to a file and return its path."""

    def _write(text: str, name: str = "def.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return _write
