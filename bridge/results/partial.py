"""Unfinished runs: the partial store beside the target, its journal, ``--resume``, and the completeness record.

A run writes into ``.NAME.partial.h5`` in the target's folder, never into the
target. After each block is written and flushed, the journal
``.NAME.partial.json`` (replaced atomically) records the block as done with the
SHA-256 of its arrays, together with the run's *fingerprint*: the SHA-256 of
every input file (and of the ``.h5`` beside an XDMF file) and the options of
the run. Only when every block is done is the completeness record written
(``/check``: each block's cell range and checksum) and the partial store
renamed onto the target, so a run killed at any moment leaves the target as it
was (absent, or the previous complete store). ``--resume`` reopens the partial
store, checks each block the journal lists against its checksum (and that
every cell of it holds a result), computes again what is missing or altered,
and refuses when the fingerprint differs; the options come from the journal.
A lock file (``.NAME.lock``, ``flock``) keeps two runs off the same target.

Partial and lock files are created exclusively (``O_EXCL``, no following of
symbolic links); a partial store that is a link or has other hard links is
never written into. A full disk or a read-only file system removes the
partial store, journal and lock, leaving the target as it was.
"""

from __future__ import annotations

import contextlib
import errno
import fcntl
import json
import os
import stat
from pathlib import Path
from typing import Any, Callable, Mapping

import numpy as np

from shells.errors import InputError, StoreError

from bridge.atomic import close_h5, write_text
from bridge.guards import is_fault
from bridge.results.complete import (CELL_TABLES, CHECK_GROUP, block_arrays, check_complete, covered, digest,
                                     part_digests, total_digest, write_parts, write_static_digests)
from bridge.results.store import CELLS, ENVELOPE, PLIES, StoreLayout, StoreWriter, extra_paths

JOURNAL_FORMAT = "plybridge-partial"
JOURNAL_VERSION = 2
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


def block_datasets(h5) -> dict:
    """Every block dataset of an open store, opened once for the run.

    Holding them open is also what keeps HDF5 from flushing a dataset's chunk cache whenever a short-lived
    handle is dropped (where a write error could only be printed, never raised).
    """
    names = [f"envelope/{k}" for k in ENVELOPE] + [f"cells/{k}" for k in CELL_TABLES]
    if "plies" in h5:
        names += [f"plies/{k}" for k in PLIES]
    names += extra_paths(h5)
    return {name: h5[name] for name in names}


def _as_stored(types: dict, envelope, cells, plies, extra=None,
               extra_names=()) -> tuple[dict, dict, dict | None, dict]:
    """The block's arrays in the store's number types, so the checksum equals that of the bytes read back
    (``extra_names``: the extra block datasets' paths, in checksum order)."""
    env = {k: np.asarray(envelope[k], dtype=types[f"envelope/{k}"].dtype) for k in ENVELOPE}
    cel = {k: np.asarray(cells[k], dtype=types[f"cells/{k}"].dtype) for k in CELL_TABLES}
    pl = None
    if plies is not None and f"plies/{next(iter(PLIES))}" in types:
        pl = {k: np.asarray(plies[k], dtype=types[f"plies/{k}"].dtype) for k in PLIES}
    ext = {k: np.asarray(extra[k], dtype=types[k].dtype) for k in extra_names}
    return env, cel, pl, ext


# ----------------------------------------------------------------------------- the partial store

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
        Reopen a matching partial store and keep its finished blocks (checked against their checksums).
    note : callable, optional
        Receives one-line notes (to stderr).
    block_cells : int, optional
        Cells per block (default: the layout's chunk).
    """

    def __init__(self, target: str | Path, fingerprint: Mapping[str, Any], layout: StoreLayout,
                 resume: bool = False, note: Note | None = None, block_cells: int | None = None):
        self.target = Path(target)
        self.fingerprint = json.loads(json.dumps(fingerprint))
        self.layout = layout
        self.resume = resume
        self.note = note or (lambda text: None)
        self.step = int(block_cells or layout.chunk)
        self.h5_path, self.journal_path, self.lock_path = partial_paths(target)
        self.done: dict[int, str] = {}
        self.parts: dict[int, dict[str, str]] = {}
        self.writer: StoreWriter | None = None
        self._lock: int | None = None
        self._h5 = None
        self._types: dict | None = None

    @property
    def n_blocks(self) -> int:
        return -(-self.layout.n_cells // self.step)

    def block_range(self, index: int) -> tuple[int, int]:
        return index * self.step, min(self.layout.n_cells, (index + 1) * self.step)

    # ------------------------------------------------------------------ lifecycle
    def __enter__(self) -> "PartialStore":
        self._acquire()
        try:
            self._open()
        except BaseException as exc:
            self._close(discard=is_fault(exc))
            raise
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        self._close(discard=exc is not None and is_fault(exc))

    def _close(self, discard: bool) -> None:
        """Close the partial store; remove it (and the journal) when nothing is worth resuming or on a fault."""
        if self._h5 is not None:
            discard = discard or not self.done
            with contextlib.suppress(Exception):
                close_h5(self._h5, discard=discard)
            self._h5 = None
            if discard:
                for path in (self.h5_path, self.journal_path):
                    with contextlib.suppress(FileNotFoundError):
                        path.unlink()
        self._release()

    def write_block(self, index: int, start: int, stop: int, envelope, cells, plies=None, extra=None) -> None:
        """Write block ``index`` (cells start … stop − 1), flush, then record it and its checksum in the journal."""
        if self._types is None:
            self._types = block_datasets(self._h5)
        env, cel, pl, ext = _as_stored(self._types, envelope, cells, plies, extra, extra_paths(self._h5))
        arrays = {**{f"envelope/{k}": v for k, v in env.items()}, **{f"cells/{k}": v for k, v in cel.items()},
                  **({f"plies/{k}": v for k, v in pl.items()} if pl is not None else {}), **ext}
        self._check_space(index, sum(a.nbytes for a in arrays.values()))
        self.writer.write_block(start, stop, env, cel, pl, ext)
        self._h5.flush()
        self.done[int(index)] = digest(arrays)
        self.parts[int(index)] = part_digests(arrays)
        self._write_journal()

    def _check_space(self, index: int, nbytes: int) -> None:
        """Stop before HDF5 meets a full disk (it cannot report that cleanly): the block, its chunk caches and
        the journal must fit in the space left."""
        from bridge.guards import ResourceError, free_bytes, size_text

        need = 2 * nbytes + 2 ** 20
        free = free_bytes(self.h5_path.parent)
        if need > free:
            raise ResourceError(f"no space left for block {index} (about {size_text(need)} needed, "
                                f"{size_text(free)} free); free some space or write to another folder",
                                str(self.target))

    def complete(self) -> None:
        """Write the completeness record, close the finished store and rename it onto the target."""
        import h5py

        ranges = np.array([self.block_range(i) for i in range(self.n_blocks)], dtype=np.int64).reshape(-1, 2)
        missing = [i for i in range(self.n_blocks) if i not in self.done]
        if missing:
            raise StoreError(f"blocks {missing[:5]} were never written; run again without --resume",
                             str(self.target))
        digests = np.array([self.done[i].encode() for i in range(self.n_blocks)], dtype="S64")
        chk = self._h5.require_group(CHECK_GROUP)
        chk.create_dataset("blocks", data=ranges)
        chk.create_dataset("digests", data=digests, dtype=h5py.string_dtype("ascii", 64))
        chk.attrs["digest"] = total_digest(digests, self.layout.n_cells)
        chk.attrs["algorithm"] = "sha256 of each block's arrays (docs/results.md)"
        write_parts(chk, [self.parts[i] for i in range(self.n_blocks)])
        write_static_digests(self._h5, chk, set(block_datasets(self._h5)))
        check_complete(self._h5, str(self.h5_path))
        close_h5(self._h5)
        self._h5 = None
        os.replace(self.h5_path, self.target)
        with contextlib.suppress(FileNotFoundError):
            self.journal_path.unlink()

    # ------------------------------------------------------------------ internals
    def _acquire(self) -> None:
        while True:
            try:
                fd = os.open(self.lock_path, os.O_RDWR | os.O_CREAT | os.O_NOFOLLOW, 0o644)
            except OSError as exc:
                if exc.errno == errno.ELOOP:
                    raise InputError(f"the lock path {self.lock_path.name} is a symbolic link; remove it (plybridge "
                                     "never follows links beside its outputs)", str(self.target)) from None
                raise
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
        if not os.path.lexists(self.h5_path):
            with contextlib.suppress(FileNotFoundError):
                self.lock_path.unlink()
        os.close(self._lock)
        self._lock = None

    def _open(self) -> None:
        import h5py

        journal = read_journal(self.journal_path, self.h5_path)
        if self.resume and journal is None:
            self.note("nothing to resume (no unfinished run of this output); starting from the first block")
        if self.resume and journal is not None:
            self._check_fingerprint(journal["fingerprint"])
            if self._plain_file(self.h5_path):
                try:
                    self._h5 = h5py.File(self.h5_path, "r+")
                    self.writer = StoreWriter(self._h5, self.layout, create=False)
                    if not self.writer.matches():
                        raise OSError("layout")
                    self.done = self._verified(journal["done"])
                    return
                except OSError as exc:
                    if is_fault(exc):
                        raise
                    if self._h5 is not None:
                        with contextlib.suppress(Exception):
                            self._h5.close()
                        self._h5 = None
            self.note("the unfinished store is damaged; starting from the first block")
        elif not self.resume and (journal is not None or os.path.lexists(self.h5_path)):
            self.note("discarding the unfinished store of an earlier run (use --resume to continue it)")
        for path in (self.journal_path, self.h5_path):
            with contextlib.suppress(FileNotFoundError):
                path.unlink()  # a link is removed, never followed
        self._h5 = h5py.File(self.h5_path, "w-")  # O_EXCL: fails on anything planted since
        self.writer = StoreWriter(self._h5, self.layout)
        self.done, self.parts = {}, {}
        self._h5.flush()
        self._write_journal()

    @staticmethod
    def _plain_file(path: Path) -> bool:
        """A regular file with no other hard link (so writing into it cannot change another file)."""
        try:
            st = os.lstat(path)
        except OSError:
            return False
        return stat.S_ISREG(st.st_mode) and st.st_nlink == 1

    def _verified(self, entries: list) -> dict[int, str]:
        """The journal's blocks whose arrays match their checksum and whose cells all hold a result."""
        done, bad = {}, []
        for index, want in entries:
            if not 0 <= index < self.n_blocks:
                continue
            start, stop = self.block_range(index)
            arrays = block_arrays(self._h5, start, stop)
            if digest(arrays) == want and covered(self._h5, start, stop):
                done[index] = want
                self.parts[index] = part_digests(arrays)
            else:
                bad.append(index)
        if bad:
            self.note(f"{len(bad)} block(s) listed as done do not match their checksum or hold no result "
                      f"(e.g. block {bad[0]}, cells {self.block_range(bad[0])[0]}…{self.block_range(bad[0])[1] - 1}); "
                      "computing them again")
        self.note(f"resuming: {len(done)} block(s) already done and verified")
        return done

    def _write_journal(self) -> None:
        write_text(self.journal_path, json.dumps({
            "format": JOURNAL_FORMAT, "version": JOURNAL_VERSION, "fingerprint": self.fingerprint,
            "done": [[i, d] for i, d in sorted(self.done.items())]}))

    def _check_fingerprint(self, old: Mapping[str, Any]) -> None:
        changed = changes(old, self.fingerprint)
        if changed:
            raise StoreError(f"--resume: the unfinished run used other inputs or options (changed: "
                             f"{'; '.join(changed)}); run again without --resume to start afresh", str(self.target))


def read_journal(journal_path: Path, h5_path: Path | None = None) -> dict | None:
    """The journal if present, readable, of this format and well formed field by field; else None."""
    try:
        if h5_path is not None and not os.path.lexists(h5_path):
            return None
        fd = os.open(journal_path, os.O_RDONLY | os.O_NOFOLLOW)
        with os.fdopen(fd, "rb") as fh:
            data = fh.read(MAX_JOURNAL_BYTES + 1)
        if len(data) > MAX_JOURNAL_BYTES:
            return None
        doc = json.loads(data.decode("utf-8"))
    except (OSError, ValueError):
        return None
    done = doc.get("done") if isinstance(doc, dict) else None
    ok = (isinstance(doc, dict) and doc.get("format") == JOURNAL_FORMAT
          and doc.get("version") == JOURNAL_VERSION and isinstance(doc.get("fingerprint"), dict)
          and isinstance(doc["fingerprint"].get("options", {}), dict) and isinstance(done, list)
          and all(isinstance(e, list) and len(e) == 2 and type(e[0]) is int and isinstance(e[1], str)
                  and len(e[1]) == 64 for e in done)
          and len({e[0] for e in done}) == len(done))
    return doc if ok else None


def store_bytes(layout: StoreLayout, mesh) -> int:
    """Estimated size of a finished store (bytes, uncompressed: an upper bound of what gzip leaves)."""
    n, mp, nc = layout.n_cells, layout.max_plies, layout.n_cases
    env = n * mp * sum(np.dtype(t).itemsize for t in ENVELOPE.values())
    cells = n * (sum(np.dtype(t).itemsize for t in CELLS.values()) + 8 * (nc + layout.n_criteria))
    plies = nc * n * mp * 3 * 8 * sum(PLIES.values()) if layout.store_plies else 0
    plies += sum(n * int(np.prod(x.tail, dtype=np.int64)) * np.dtype(x.dtype).itemsize for x in layout.extra)
    geometry = mesh.points.size * 8 + sum(c.size for _, c in mesh.blocks) * 8 + n * 64
    return int(env + cells + plies + geometry + 2 ** 20)


def check_store_space(target: str | Path, layout: StoreLayout, mesh, resume: bool = False) -> None:
    """Refuse a run whose estimated store does not fit on the target's file system (the partial store of a
    resumed run counts as already written)."""
    from bridge.guards import check_free_space

    need = store_bytes(layout, mesh)
    if resume:
        with contextlib.suppress(OSError):
            need -= os.lstat(partial_paths(target)[0]).st_size
    check_free_space(target, max(need, 0), f"the results store ({layout.n_cells:,} cells × "
                     f"{layout.n_cases:,} cases{', ply states' if layout.store_plies else ''})")


def journal_options(target: str | Path) -> dict[str, Any]:
    """The options recorded by the unfinished run of ``target`` (empty when there is none)."""
    h5_path, journal_path, _ = partial_paths(target)
    doc = read_journal(journal_path, h5_path)
    return dict(doc["fingerprint"].get("options", {})) if doc else {}


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
