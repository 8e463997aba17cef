"""Unfinished runs: the partial store beside the target, its journal, and ``--resume``.

A run writes into ``.NAME.partial.h5`` in the target's folder, never into the
target. After each block is written and flushed, the journal
``.NAME.partial.json`` (replaced atomically) records the block as done,
together with the run's *fingerprint*: the SHA-256 of every input file (and of
the ``.h5`` beside an XDMF file) and the options that fix the store's layout.
Only when every block is done is the partial store renamed onto the target, so
a run killed at any moment leaves the target as it was (absent, or the
previous complete store). ``--resume`` reopens the partial store and computes
the blocks the journal does not list; it refuses when the fingerprint differs.
A lock file (``.NAME.lock``, ``flock``) keeps two runs off the same target.
"""

from __future__ import annotations

import contextlib
import fcntl
import json
import os
from pathlib import Path
from typing import Any, Callable, Mapping

from shells.errors import InputError, StoreError

from bridge.atomic import write_text
from bridge.results.store import StoreLayout, StoreWriter

JOURNAL_FORMAT = "plybridge-partial"
JOURNAL_VERSION = 1
#: Largest journal read back (bytes).
MAX_JOURNAL_BYTES = 16 * 2 ** 20

Note = Callable[[str], None]


def companions(path: str | Path) -> list[Path]:
    """Files an input depends on beyond itself: the heavy-data ``.h5`` of an XDMF file."""
    p = Path(path)
    if p.suffix.lower() in (".xdmf", ".xmf") and p.with_suffix(".h5").is_file():
        return [p.with_suffix(".h5")]
    return []


def partial_paths(target: str | Path) -> tuple[Path, Path, Path]:
    """(partial store, journal, lock file) of a target."""
    t = Path(target)
    return (t.with_name(f".{t.name}.partial.h5"), t.with_name(f".{t.name}.partial.json"),
            t.with_name(f".{t.name}.lock"))


class PartialStore:
    """The unfinished store of one run (use as a context manager; see the module notes).

    Parameters
    ----------
    target : path
        The store's final path.
    fingerprint : dict
        JSON-ready inputs and options of the run (compared on resume).
    layout : StoreLayout
    resume : bool
        Reopen a matching partial store and keep its finished blocks.
    note : callable, optional
        Receives one-line notes (to stderr).
    """

    def __init__(self, target: str | Path, fingerprint: Mapping[str, Any], layout: StoreLayout,
                 resume: bool = False, note: Note | None = None):
        self.target = Path(target)
        self.fingerprint = json.loads(json.dumps(fingerprint))
        self.layout = layout
        self.resume = resume
        self.note = note or (lambda text: None)
        self.h5_path, self.journal_path, self.lock_path = partial_paths(target)
        self.done: set[int] = set()
        self.writer: StoreWriter | None = None
        self._lock: int | None = None
        self._h5 = None

    # ------------------------------------------------------------------ lifecycle
    def __enter__(self) -> "PartialStore":
        self._acquire()
        try:
            self._open()
        except BaseException:
            self._release()
            raise
        return self

    def __exit__(self, *exc) -> None:
        if self._h5 is not None:
            with contextlib.suppress(Exception):
                self._h5.close()
            if not self.done:  # nothing worth resuming: leave no file behind
                for path in (self.h5_path, self.journal_path):
                    with contextlib.suppress(FileNotFoundError):
                        path.unlink()
        self._release()

    def record(self, index: int) -> None:
        """Mark block ``index`` done: flush the store to disk, then rewrite the journal."""
        self._h5.flush()
        self.done.add(int(index))
        self._write_journal()

    def complete(self) -> None:
        """Close the finished store and rename it onto the target; remove the journal."""
        self._h5.close()
        self._h5 = None
        os.replace(self.h5_path, self.target)
        with contextlib.suppress(FileNotFoundError):
            self.journal_path.unlink()

    # ------------------------------------------------------------------ internals
    def _acquire(self) -> None:
        while True:
            fd = os.open(self.lock_path, os.O_RDWR | os.O_CREAT, 0o644)
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                os.close(fd)
                raise InputError(f"another plybridge recover is writing this store (lock {self.lock_path.name}); "
                                 "wait for it to end or choose another output", str(self.target)) from None
            try:
                same = os.fstat(fd).st_ino == os.stat(self.lock_path).st_ino
            except FileNotFoundError:
                same = False
            if same:  # not a lock file unlinked by a run that just ended
                self._lock = fd
                return
            os.close(fd)

    def _release(self) -> None:
        if self._lock is None:
            return
        if not self.h5_path.exists():
            with contextlib.suppress(FileNotFoundError):
                self.lock_path.unlink()
        os.close(self._lock)
        self._lock = None

    def _open(self) -> None:
        import h5py

        journal = self._read_journal()
        if self.resume and journal is None:
            self.note("nothing to resume (no unfinished run of this output); starting from the first block")
        if self.resume and journal is not None:
            self._check_fingerprint(journal["fingerprint"])
            try:
                self._h5 = h5py.File(self.h5_path, "r+")
                self.writer = StoreWriter(self._h5, self.layout, create=False)
                if not self.writer.matches():
                    raise OSError("layout")
                self.done = set(journal["done"])
                self.note(f"resuming: {len(self.done)} block(s) already done")
                return
            except OSError:
                if self._h5 is not None:
                    self._h5.close()
                self.note("the unfinished store is damaged; starting from the first block")
        elif journal is not None or self.h5_path.exists():
            self.note("discarding the unfinished store of an earlier run (use --resume to continue it)")
        with contextlib.suppress(FileNotFoundError):
            self.journal_path.unlink()
        self._h5 = h5py.File(self.h5_path, "w")
        self.writer = StoreWriter(self._h5, self.layout)
        self.done = set()
        self._h5.flush()
        self._write_journal()

    def _write_journal(self) -> None:
        write_text(self.journal_path, json.dumps({"format": JOURNAL_FORMAT, "version": JOURNAL_VERSION,
                                                  "fingerprint": self.fingerprint, "done": sorted(self.done)}))

    def _read_journal(self) -> dict | None:
        """The journal if present, readable and of this format; else None."""
        try:
            if self.journal_path.stat().st_size > MAX_JOURNAL_BYTES or not self.h5_path.is_file():
                return None
            doc = json.loads(self.journal_path.read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return None
        ok = (isinstance(doc, dict) and doc.get("format") == JOURNAL_FORMAT
              and doc.get("version") == JOURNAL_VERSION and isinstance(doc.get("fingerprint"), dict)
              and isinstance(doc.get("done"), list) and all(isinstance(i, int) for i in doc["done"]))
        return doc if ok else None

    def _check_fingerprint(self, old: Mapping[str, Any]) -> None:
        changed = changes(old, self.fingerprint)
        if changed:
            raise StoreError(f"--resume: the unfinished run used other inputs or options (changed: "
                             f"{'; '.join(changed)}); run again without --resume to start afresh", str(self.target))


def changes(old: Mapping[str, Any], new: Mapping[str, Any]) -> list[str]:
    """What differs between two fingerprints: input roles by content (not path), then options."""
    out = []
    old_in, new_in = old.get("inputs", {}), new.get("inputs", {})
    for role in sorted(set(old_in) | set(new_in)):
        a, b = old_in.get(role, {}), new_in.get(role, {})
        if {k: v for k, v in a.items() if k != "path"} != {k: v for k, v in b.items() if k != "path"}:
            out.append(f"{role} {b.get('path') or a.get('path', '')}")
    old_opt, new_opt = old.get("options", {}), new.get("options", {})
    for key in sorted(set(old_opt) | set(new_opt)):
        if old_opt.get(key) != new_opt.get(key):
            out.append(f"{key} {old_opt.get(key)!r} -> {new_opt.get(key)!r}")
    return out
