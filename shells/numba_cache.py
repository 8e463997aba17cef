"""Where numba caches the compiled kernels: a folder keyed on the sources of this package.

Numba keys each cache entry on the source file of the compiled function only.
The recovery kernel inlines the criteria (and freezes the property-vector
indices of :mod:`shells.params`), so after an edit of a criterion numba would
serve the old kernel. To make that impossible, the cache folder itself is keyed
on a hash of every ``.py`` file of the ``shells`` package:

- ``NUMBA_CACHE_DIR`` set by the user: the subfolder ``plybridge-<key>`` of it;
- not set: ``$XDG_CACHE_HOME/plybridge/numba-<key>`` (``~/.cache`` when
  ``XDG_CACHE_HOME`` is unset), or the same under the temporary folder when
  that cannot be created.

Folders of older keys are never read again and may be deleted at any time.
:func:`configure` runs when :mod:`shells` is imported and again before each
module that defines cached kernels, so every kernel is created with the keyed
folder.
"""

from __future__ import annotations

import functools
import hashlib
import os
import sys
import tempfile
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent
KEY_LENGTH = 16


def source_key(root: str | Path = PACKAGE) -> str:
    """Hex digest (:data:`KEY_LENGTH` characters) of every ``.py`` file under ``root``, names and contents."""
    root = Path(root)
    h = hashlib.sha256()
    for path in sorted(root.rglob("*.py")):
        if "__pycache__" in path.parts:
            continue
        h.update(path.relative_to(root).as_posix().encode())
        h.update(b"\0")
        h.update(path.read_bytes())
        h.update(b"\0")
    return h.hexdigest()[:KEY_LENGTH]


def cache_folder(key: str, environ: os._Environ | dict | None = None) -> Path:
    """The cache folder for sources of ``key`` under the environment ``environ`` (default ``os.environ``)."""
    env = os.environ if environ is None else environ
    user = env.get("NUMBA_CACHE_DIR", "")
    if user:
        user_path = Path(user)
        return user_path if user_path.name == f"plybridge-{key}" else user_path / f"plybridge-{key}"
    base = Path(env.get("XDG_CACHE_HOME") or Path.home() / ".cache")
    return base / "plybridge" / f"numba-{key}"


@functools.lru_cache(maxsize=1)
def _folder() -> str:
    folder = cache_folder(source_key())
    try:
        folder.mkdir(parents=True, exist_ok=True)
        probe = folder / f".probe-{os.getpid()}"
        probe.write_bytes(b"")
        probe.unlink()
    except OSError:
        folder = Path(tempfile.gettempdir()) / f"plybridge-{os.getuid() if hasattr(os, 'getuid') else 'user'}" / \
            folder.name
        folder.mkdir(parents=True, exist_ok=True)
    return str(folder)


def configure() -> str:
    """Point numba's cache at the keyed folder (idempotent); return the folder.

    Numba is not imported here (``plybridge --help`` must stay fast): the folder is put in the environment as
    ``NUMBA_CACHE_DIR``, which numba reads when it is first imported (and child processes inherit: a keyed
    folder is kept as is, :func:`cache_folder`), and set in numba's configuration if numba is loaded already.
    """
    folder = _folder()
    os.environ["NUMBA_CACHE_DIR"] = folder
    config = sys.modules.get("numba.core.config")
    if config is not None and config.CACHE_DIR != folder:
        config.CACHE_DIR = folder
    return folder
