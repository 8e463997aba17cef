"""The completeness record of a results store: a checksum per block of cells, checked when a store is read.

``plybridge recover`` writes ``/check`` when every block is done: ``blocks`` (n_blocks, 2) cell ranges
``[start, stop)`` in order, ``digests`` the SHA-256 of each block's arrays (envelope rows, cell summary, ply
states when stored; names, number types, shapes and bytes), and the attribute ``digest`` over all of them
and the cell count; ``names`` and ``parts`` the SHA-256 of each dataset's slice of each block;
``static_names`` and ``static_digests`` the SHA-256 of every other dataset (mesh, model, hot spots, sections,
materials, metadata), each whole.
:func:`check_complete` (called by :class:`bridge.results.store.StoreReader`, so by render, plot, report and
``--view``) refuses a store without a valid record or with a cell that holds no result; the datasets a reader
then reads are checked against ``parts`` as they are read (:mod:`bridge.results.verified`);
:func:`verify_blocks` re-reads every block and compares its checksum.
"""

from __future__ import annotations

import hashlib
from typing import Mapping

import numpy as np

from shells.errors import StoreError

from bridge.results.store import CELLS, ENVELOPE, PLIES, extra_paths

#: The completeness record of a finished store.
CHECK_GROUP = "check"
CELL_TABLES = (*CELLS, "case_margin", "criterion_margin")


def block_arrays(h5, start: int, stop: int) -> dict[str, np.ndarray]:
    """The arrays of cells start … stop − 1 as stored (envelope rows, cell summary, ply states if any, then the
    extra block datasets named by the store's ``block_extra`` attribute)."""
    out = {f"envelope/{k}": h5["envelope"][k][start:stop] for k in ENVELOPE}
    out.update({f"cells/{k}": h5["cells"][k][start:stop] for k in CELL_TABLES})
    if "plies" in h5:
        out.update({f"plies/{k}": h5["plies"][k][:, start:stop] for k in PLIES})
    out.update({path: h5[path][start:stop] for path in extra_paths(h5)})
    return out


def digest(arrays: Mapping[str, np.ndarray]) -> str:
    """SHA-256 of named arrays (names, shapes, types and bytes, in the given order)."""
    h = hashlib.sha256()
    for name, a in arrays.items():
        a = np.ascontiguousarray(a)
        h.update(f"{name}|{a.dtype.str}|{a.shape}|".encode())
        h.update(a.data)
    return h.hexdigest()


def part_digests(arrays: Mapping[str, np.ndarray]) -> dict[str, str]:
    """SHA-256 of each named array of a block on its own (:func:`digest` of one array)."""
    return {name: digest({name: a}) for name, a in arrays.items()}


def write_parts(chk, parts: list[dict[str, str]]) -> None:
    """``/check/names`` (the block datasets) and ``/check/parts`` (n_blocks, n_names): the checksum of each
    dataset's slice of each block, so a reader can verify just what it reads (:mod:`bridge.results.verified`)."""
    import h5py

    names = list(parts[0]) if parts else []
    chk.create_dataset("names", data=np.array(names, dtype=object), dtype=h5py.string_dtype())
    table = np.array([[p[name].encode() for name in names] for p in parts], dtype="S64").reshape(len(parts),
                                                                                                   len(names))
    chk.create_dataset("parts", data=table, dtype=h5py.string_dtype("ascii", 64))


def value_digest(name: str, a: np.ndarray) -> str:
    """SHA-256 of a dataset's whole value; text (object) arrays by their UTF-8 bytes."""
    a = np.asarray(a)
    if a.dtype.kind == "O":
        h = hashlib.sha256(f"{name}|text|{a.shape}|".encode())
        for v in a.ravel():
            h.update((v if isinstance(v, bytes) else str(v).encode("utf-8")) + b"\0")
        return h.hexdigest()
    return digest({name: a})


def write_static_digests(h5, chk, block_names) -> None:
    """``/check/static_names`` and ``/check/static_digests``: the SHA-256 of every other dataset of the store
    (mesh, model, hot spots, sections, materials, metadata), each whole, checked when a reader reads it."""
    import h5py

    names = []
    h5.visititems(lambda key, obj: names.append(key) if isinstance(obj, h5py.Dataset) and key not in block_names
                  and not key.startswith(CHECK_GROUP + "/") else None)
    chk.create_dataset("static_names", data=np.array(names, dtype=object), dtype=h5py.string_dtype())
    chk.create_dataset("static_digests", data=np.array([value_digest(n, h5[n][()]).encode() for n in names],
                                                       dtype="S64"), dtype=h5py.string_dtype("ascii", 64))


def covered(h5, start: int, stop: int) -> bool:
    """Every cell of the range holds a result (critical ply 0 or more; the fill value is −1)."""
    return bool((h5["cells"]["critical_ply"][start:stop] >= 0).all())


def check_complete(h5, path: str) -> None:
    """Refuse a store that breaks the loading rules or lacks a valid completeness record (render, report, plot).

    Checks: the HDF5 loading rules (:func:`bridge.mesh.h5_rules.check_file`), the record ``/check`` (block
    ranges covering every cell once, the total checksum of the block checksums), and that every cell holds a
    result. The blocks' own checksums are checked by :func:`verify_blocks` (reads the whole store).
    """
    from bridge.mesh.h5_rules import check_file

    check_file(h5, path, StoreError)
    chk = h5.get(CHECK_GROUP)
    again = "run plybridge recover again"
    if chk is None or "blocks" not in chk or "digests" not in chk or "cells/critical_ply" not in h5:
        raise StoreError(f"the store has no completeness record (/{CHECK_GROUP}): it is unfinished, damaged or "
                         f"written by an earlier plybridge; {again}", path)
    n = h5["cells/critical_ply"].shape[0]
    blocks, digests = chk["blocks"][()], chk["digests"][()]
    ends = np.concatenate([[0], blocks[:, 1]]) if blocks.size else np.zeros(1, np.int64)
    if (blocks.ndim != 2 or len(blocks) != len(digests) or (blocks.size and not np.array_equal(blocks[:, 0], ends[:-1]))
            or int(ends[-1]) != n or chk.attrs.get("digest") != total_digest(digests, n)):
        raise StoreError(f"the completeness record /{CHECK_GROUP} does not match the store (altered or damaged); "
                         f"{again}", path)
    missing = np.flatnonzero(h5["cells/critical_ply"][()] < 0)
    if missing.size:
        raise StoreError(f"{missing.size} cells hold no result (e.g. cells {', '.join(map(str, missing[:5]))}); "
                         f"the store is incomplete; {again}", path)


def total_digest(digests, n_cells: int) -> str:
    h = hashlib.sha256(f"{int(n_cells)}|".encode())
    for d in digests:
        h.update(d if isinstance(d, bytes) else str(d).encode())
    return h.hexdigest()


def verify_blocks(h5) -> list[int]:
    """Indices of the blocks of a finished store whose arrays no longer match their checksum."""
    chk = h5[CHECK_GROUP]
    return [i for i, ((a, b), d) in enumerate(zip(chk["blocks"][()], chk["digests"][()]))
            if digest(block_arrays(h5, int(a), int(b))) != d.decode()]
