"""Atomic output files: write to a temporary file beside the target, then rename.

A crash, a signal or an exception while writing leaves the target untouched
(either absent or the previous complete version) and no stray temporary file. A file-system fault (full disk,
read-only file system, permission, I/O error) met while writing comes out as one line naming the target.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path
from typing import Iterator


@contextlib.contextmanager
def atomic_path(target: str | os.PathLike, suffix: str | None = None) -> Iterator[Path]:
    """Yield a temporary path in the target's folder; on success rename it onto ``target``.

    Parameters
    ----------
    target : path-like
        The final output path. Its folder must exist.
    suffix : str, optional
        Suffix of the temporary file (defaults to the target's, so writers that
        choose a format by extension still do the right thing).

    Notes
    -----
    The temporary name starts with ``.`` and ends with the target suffix, e.g.
    ``.MAP.png.tmp1234.png``; on any exception it is removed and the exception
    propagates.
    """
    target = Path(target)
    folder = target.parent if str(target.parent) else Path(".")
    suffix = target.suffix if suffix is None else suffix
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.tmp", suffix=suffix, dir=folder)
    except OSError as exc:
        _raise_fault(exc, target)
        raise
    os.close(fd)
    tmp_path = Path(tmp)
    os.chmod(tmp_path, 0o666 & ~_umask())   # mkstemp makes 0600; outputs get the usual permissions
    try:
        yield tmp_path
        os.replace(tmp_path, target)
    except BaseException as exc:
        with contextlib.suppress(FileNotFoundError):
            tmp_path.unlink()
        _raise_fault(exc, target)
        raise


def _raise_fault(exc: BaseException, target: Path) -> None:
    """A full disk, a read-only file system, a permission or an I/O error while writing ``target``: raised again
    as one line naming ``target`` (:func:`bridge.guards.fault_error`), whichever writer met it."""
    from bridge.guards import fault_error

    fault = fault_error(exc, target)
    if fault is not None:
        raise fault from None


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def close_h5(h5, discard: bool = False) -> None:
    """Close an h5py file opened for writing; with ``discard``, its contents are given up first.

    On a full disk HDF5 cannot flush its cached chunks and metadata when a file is closed, which leaves the
    library in a state that fails again at exit (errors printed for every open object, then a crash). To
    give up a file, its descriptor is first pointed at an empty in-memory file (``memfd``), so the close
    that follows writes nowhere on disk and succeeds; the caller then removes the file.
    """
    if discard:
        with contextlib.suppress(Exception):
            fd = h5.id.get_vfd_handle()
            mem = os.memfd_create("plybridge-discarded")
            os.dup2(mem, fd)
            os.close(mem)
        for _ in range(2):  # after a failed flush HDF5 may refuse the first close ("slist already enabled")
            try:
                h5.close()
                return
            except Exception:
                continue
        return
    try:
        h5.close()
    except Exception:
        close_h5(h5, discard=True)
        raise


@contextlib.contextmanager
def atomic_h5(target: str | os.PathLike) -> Iterator:
    """An h5py file open for writing at a temporary path beside ``target``, renamed onto it on success.

    On any exception (a full disk included) the temporary file is given up (:func:`close_h5`) and removed;
    ``target`` is untouched.
    """
    import h5py

    with atomic_path(target) as tmp:
        h5 = h5py.File(tmp, "w")
        try:
            yield h5
        except BaseException:
            with contextlib.suppress(Exception):
                close_h5(h5, discard=True)
            raise
        close_h5(h5)


def write_text(target: str | os.PathLike, text: str) -> None:
    """Write ``text`` (UTF-8) to ``target`` atomically."""
    with atomic_path(target) as tmp:
        tmp.write_text(text, encoding="utf-8")
