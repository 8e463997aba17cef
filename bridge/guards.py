"""What every command checks before it writes, and file-system faults as one-line errors.

- :func:`guard_outputs`: no output (nor a file written beside it) is an input or another output, compared by
  resolved path and by device and inode (symbolic and hard links included); an XDMF output's ``<stem>.h5``
  replaces only the heavy data of the XDMF file being replaced; every output folder exists and is writable. One helper for every command (docs/scale.md, "Loading and safety rules").
- :func:`check_free_space` and :func:`check_memory`: refuse a run whose estimated size does not fit, with the
  estimate in the message.
- :func:`fault_error`: a full disk, a read-only file system, a permission or an I/O error raised anywhere
  (Python's ``OSError`` or h5py's ``RuntimeError`` carrying an ``errno``) as one :class:`InputError` naming
  the file and the fix.
"""

from __future__ import annotations

import errno as errnos
import os
import re
from pathlib import Path
from typing import Iterable, Mapping

from shells.errors import InputError


class OutputError(InputError):
    """An output path that would overwrite an input or another output, or cannot be written."""


class ResourceError(InputError):
    """Not enough disk space or memory, a read-only file system, or another file-system fault."""


# ----------------------------------------------------------------------------- outputs vs inputs

def side_files(path: str | os.PathLike) -> list[Path]:
    """Files a writer creates beside an output besides the output itself (XDMF: the heavy data ``stem.h5``)."""
    p = Path(path)
    if p.suffix.lower() in (".xdmf", ".xmf"):
        return [p.with_suffix(".h5")]
    return []


def input_files(path: str | os.PathLike) -> list[Path]:
    """An input and the files it reads besides itself (the heavy-data files of an XDMF file)."""
    p = Path(path)
    out = [p]
    if p.suffix.lower() in (".xdmf", ".xmf") or _is_xdmf(p):
        from bridge.mesh.h5_rules import xdmf_data_files

        out += [p.with_suffix(".h5"), *xdmf_data_files(p)]
    return out


def _is_xdmf(p: Path) -> bool:
    try:
        with open(p, "rb") as fh:
            return b"<Xdmf" in fh.read(4096)
    except OSError:
        return False


def _identity(p: Path) -> tuple | str:
    """(device, inode) of an existing file, else its resolved path."""
    try:
        st = os.stat(p)
        return (st.st_dev, st.st_ino)
    except OSError:
        return os.path.realpath(p)


def _why(out: Path, other: Path) -> str:
    if os.path.realpath(out) == os.path.realpath(other):
        return "" if os.path.abspath(out) == os.path.abspath(other) else " (through a symbolic link)"
    return " (a hard link to it)"


def guard_outputs(inputs: Mapping[str, object], outputs: Mapping[str, object],
                  extra_outputs: Mapping[str, Iterable[str | os.PathLike]] | None = None) -> None:
    """Refuse outputs that are inputs, collide with each other, or cannot be written.

    Parameters
    ----------
    inputs : mapping of role to path or list of paths
        Every file the command reads (``None`` entries are skipped); XDMF inputs bring their heavy data.
    outputs : mapping of option to path
        Every file the command writes (``None`` entries are skipped); XDMF outputs bring their ``.h5``.
    extra_outputs : mapping of option to paths, optional
        Further files written for an option (e.g. the partial store, journal and lock of a results store).

    Raises
    ------
    OutputError
        Naming the option, the output, the input (or other output) it resolves to, and the fix.
    """
    ins: list[tuple[str, Path, tuple | str]] = []
    for role, value in inputs.items():
        for path in _paths(value):
            for f in input_files(path):
                if f.exists():
                    ins.append((f"{role} input" if f == Path(path) else f"heavy data of the {role} input {path}:",
                                f, _identity(f)))
    seen: dict[tuple | str, tuple[str, Path]] = {}
    for option, value in outputs.items():
        for path in _paths(value):
            files = [(Path(path), "")] + [(s, f" writes {s.name} beside it, and that") for s in side_files(path)]
            files += [(Path(s), f" writes {Path(s).name} beside it, and that")
                      for s in (extra_outputs or {}).get(option, ())]
            _check_folder(option, Path(path))
            for f, via in files:
                ident = _identity(f)
                for role, src, other in ins:
                    if ident == other:
                        raise OutputError(f"{option} {path}{via} is the {role} {src}{_why(f, src)}; writing it "
                                          "would destroy the input. Choose another output path")
                if ident in seen:
                    first, fpath = seen[ident]
                    raise OutputError(f"{option} {path}{via} is the same file as {first} {fpath}; give each "
                                      "output its own path")
                seen[ident] = (option, f)
            _check_companions(option, Path(path))


def _check_companions(option: str, path: Path) -> None:
    """An XDMF output replaces ``<stem>.h5`` only when that is the heavy data of the XDMF file it replaces."""
    from bridge.mesh.h5_rules import is_xdmf_companion

    for side in side_files(path):
        if os.path.lexists(side) and not is_xdmf_companion(path, side):
            raise OutputError(f"{option} {path} writes {side.name} beside it, and {side} exists but is not the "
                              f"heavy data of an existing {path.name} (writing would destroy it); choose another "
                              f"output name or move {side.name} away")


def _paths(value) -> list[str]:
    if value is None:
        return []
    if isinstance(value, (list, tuple)):
        return [str(v) for v in value if v is not None]
    return [str(value)]


def _check_folder(option: str, path: Path) -> None:
    folder = path.parent if str(path.parent) else Path(".")
    if path.is_dir():
        raise OutputError(f"{option} {path} is a folder; give a file path")
    if not folder.is_dir():
        raise OutputError(f"{option} {path}: the folder {folder} does not exist; create it first")
    if read_only(folder):
        raise ResourceError(f"{option} {path}: the folder {folder} is on a read-only file system; write the "
                            "output to a writable folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise ResourceError(f"{option} {path}: no permission to write in {folder}; choose a folder you can "
                            "write to")


def read_only(folder: Path) -> bool:
    try:
        return bool(os.statvfs(folder).f_flag & os.ST_RDONLY)
    except OSError:
        return False


# ----------------------------------------------------------------------------- space and memory

def size_text(nbytes: float) -> str:
    """``1.5 GiB``-style size."""
    for unit in ("bytes", "KiB", "MiB", "GiB", "TiB"):
        if abs(nbytes) < 1024 or unit == "TiB":
            return f"{nbytes:.0f} {unit}" if unit == "bytes" else f"{nbytes:.1f} {unit}"
        nbytes /= 1024
    return f"{nbytes:.1f} TiB"  # pragma: no cover


def free_bytes(folder: str | os.PathLike) -> int:
    st = os.statvfs(folder)
    return st.f_bavail * st.f_frsize


def check_free_space(target: str | os.PathLike, need: int, what: str) -> None:
    """Refuse when the file system of ``target``'s folder has less than ``need`` bytes free.

    Raises
    ------
    ResourceError
        With the estimate and the free space.
    """
    folder = Path(target).parent if str(Path(target).parent) else Path(".")
    free = free_bytes(folder)
    if need > free:
        raise ResourceError(f"{what} needs about {size_text(need)} (estimate) but {folder} has "
                            f"{size_text(free)} free; free some space or write to another folder", str(target))


def available_memory() -> int:
    """Memory available to a new allocation (bytes): MemAvailable of /proc/meminfo, else physical memory."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    try:
        return os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError):  # pragma: no cover
        return 2 ** 62


def check_memory(need: int, what: str, fix: str, source: str | None = None) -> None:
    """Refuse before allocating when ``need`` bytes exceed the memory available.

    Raises
    ------
    ResourceError
        ``{what} needs about X of memory (estimate) but Y are available; {fix}``.
    """
    have = available_memory()
    if need > have:
        raise ResourceError(f"{what} needs about {size_text(need)} of memory (estimate) but "
                            f"{size_text(have)} are available; {fix}", source)


# ----------------------------------------------------------------------------- faults

#: errno -> (what happened, the fix).
FAULTS = {
    errnos.ENOSPC: ("no space left on the device", "free some space or write to another folder"),
    errnos.EDQUOT: ("disk quota exceeded", "free some space or write to another folder"),
    errnos.EROFS: ("read-only file system", "write to a writable folder"),
    errnos.EACCES: ("permission denied", "check the permissions or choose another path"),
    errnos.EPERM: ("operation not permitted", "check the permissions or choose another path"),
    errnos.ENOENT: ("no such file or folder", "check the path"),
    errnos.EISDIR: ("is a folder", "give a file path"),
    errnos.ENOTDIR: ("a part of the path is not a folder", "check the path"),
    errnos.EIO: ("input/output error", "check the disk and the file"),
    errnos.ELOOP: ("a symbolic link where a file was expected", "remove the link or choose another path"),
    errnos.EEXIST: ("the file appeared while writing", "make sure no other program writes there"),
    errnos.EFBIG: ("file too large for the file system", "write to another file system"),
    errnos.ENAMETOOLONG: ("file name too long", "choose a shorter path"),
    errnos.EMFILE: ("too many open files", "raise the open-file limit"),
}

_H5_NAME = re.compile(r"(?:file ?name|name) = '([^']*)'")
_H5_ERRNO = re.compile(r"errno = (\d+)")


def fault_errno(exc: BaseException) -> int | None:
    """The errno of an OSError, or the one h5py writes in its message (``errno = 28``)."""
    code = getattr(exc, "errno", None)
    if isinstance(code, int) and code in FAULTS:
        return code
    m = _H5_ERRNO.search(str(exc))
    return int(m.group(1)) if m and int(m.group(1)) in FAULTS else None


def is_fault(exc: BaseException) -> bool:
    """True for a file-system fault (full disk, read-only, permission, I/O) rather than bad content."""
    return isinstance(exc, ResourceError) or (isinstance(exc, (OSError, RuntimeError))
                                              and fault_errno(exc) is not None)


def fault_error(exc: BaseException, path: str | os.PathLike | None = None) -> InputError | None:
    """One-line :class:`ResourceError` for a file-system fault (``None`` when ``exc`` is not one), naming ``path``
    (the output being written) when given, else the file the error names."""
    if not isinstance(exc, (OSError, RuntimeError)):
        return None
    code = fault_errno(exc)
    if code is None:
        return None
    name = str(path) if path is not None else getattr(exc, "filename", None)
    if not name:
        m = _H5_NAME.search(str(exc))
        name = m.group(1) if m else None
    what, fix = FAULTS[code]
    return ResourceError(f"{what}; {fix}", str(name) if name else None)
