"""Reading a finished store through its block checksums: every block dataset is verified as it is read.

A results store records the SHA-256 of each block dataset's slice of each block (``/check/parts``, written by
:mod:`bridge.results.partial`). :class:`StoreReader <bridge.results.store.StoreReader>` hands out its file
through :func:`verified`: reading cells of ``/envelope/*``, ``/cells/*`` or ``/plies/*`` first reads and hashes
the blocks those cells lie in (once per block and dataset for the life of the reader) and refuses a store
whose values were altered after the run. The cost is one more hash of what is read: a whole dataset read with
``[()]`` is hashed from the values read, a slice reads its blocks once more. The other datasets (mesh,
model, hot spots, sections, materials, metadata) are checked whole at their first read (``/check/static_*``).
A store written before ``/check/parts`` existed has each whole block verified instead.
"""

from __future__ import annotations

import numpy as np

from shells.errors import StoreError

from bridge.results.complete import CHECK_GROUP, block_arrays, digest, value_digest


def _text(v) -> str:
    return v.decode() if isinstance(v, bytes) else str(v)


def altered(what: str, path: str) -> "AlteredStoreError":
    """The one-line refusal of a store whose ``what`` no longer matches its checksum."""
    return AlteredStoreError(f"the store was altered after the run: {what} no longer matches its checksum (/check); "
                             "run plybridge recover again", path)


class AlteredStoreError(StoreError):
    """A value of a finished store no longer matches its checksum: never worked around, always refused."""


#: Datasets whose cells run along their second axis (cases first).
CASES_FIRST = ("plies/",)


class BlockCheck:
    """The block ranges and checksums of an open store, and which blocks of which datasets are verified."""

    def __init__(self, h5, path: str):
        chk = h5[CHECK_GROUP]
        self.h5, self.path = h5, path
        self.blocks = chk["blocks"][()].reshape(-1, 2)
        self.digests = [_text(d) for d in chk["digests"][()]]
        if "parts" in chk and "names" in chk:
            self.names = [_text(n) for n in chk["names"][()]]
            self.parts = chk["parts"][()]
        else:
            self.names = list(block_arrays(h5, 0, 0))          # whole blocks (an older store)
            self.parts = None
        self.static: dict[str, str] = {}
        if "static_names" in chk and "static_digests" in chk:
            self.static = {_text(n): _text(d) for n, d in zip(chk["static_names"][()], chk["static_digests"][()])}
        self.done: set = set()

    def verify_static(self, name: str, ds) -> np.ndarray:
        """The whole value of a dataset written once (mesh, model, …), checked against its checksum."""
        values = ds[()]
        if name not in self.done:
            if value_digest(name, values) != self.static[name]:
                raise altered(f"/{name}", self.path)
            self.done.add(name)
        return values

    def covers(self, name: str) -> bool:
        return name in self.names

    def axis(self, name: str) -> int:
        return 1 if name.startswith(CASES_FIRST) else 0

    def blocks_of(self, first: int, last: int) -> range:
        starts = self.blocks[:, 0]
        return range(max(0, int(np.searchsorted(starts, first, "right")) - 1),
                      int(np.searchsorted(starts, last, "right")))

    def verify(self, name: str, ds, first: int, last: int, values: np.ndarray | None = None) -> None:
        """Verify the blocks holding cells first … last of dataset ``name`` (``values``: the whole dataset, read)."""
        for b in self.blocks_of(first, last):
            key = (name if self.parts is not None else "*", b)
            if key in self.done:
                continue
            start, stop = (int(v) for v in self.blocks[b])
            if self.parts is None:
                ok = digest(block_arrays(self.h5, start, stop)) == self.digests[b]
            else:
                cut = (slice(None),) * self.axis(name) + (slice(start, stop),)
                part = values[cut] if values is not None else ds[cut]
                want = self.parts[b, self.names.index(name)]
                ok = digest({name: part}) == _text(want)
            if not ok:
                raise altered(f"/{name}, cells {start}…{stop - 1},", self.path)
            self.done.add(key)


def _cell_range(key, axis: int, n: int) -> tuple[int, int] | None:
    """(first, last) cell a read of ``key`` touches along ``axis`` (all cells when it cannot be told); None when
    it reads no cell."""
    everything = (0, n - 1) if n else None
    parts = key if isinstance(key, tuple) else (key,)
    if any(p is Ellipsis for p in parts) or len(parts) <= axis:
        return everything
    k = parts[axis]
    if isinstance(k, (int, np.integer)):
        i = int(k) + (n if int(k) < 0 else 0)
        return (i, i) if 0 <= i < n else None
    if isinstance(k, slice):
        idx = range(*k.indices(n))
        return (min(idx), max(idx)) if len(idx) else None
    try:
        a = np.asarray(k)
    except Exception:  # noqa: BLE001 - anything unusual: verify every block
        return everything
    if a.dtype == bool:
        a = np.flatnonzero(a)
    if a.dtype.kind not in "iu":
        return everything
    return (int(a.min()), int(a.max())) if a.size else None


class VerifiedDataset:
    """A block dataset of a finished store whose reads are verified first (other attributes: the dataset's)."""

    def __init__(self, ds, name: str, check: BlockCheck):
        self._ds, self._name, self._check = ds, name, check

    def __getattr__(self, attr):
        return getattr(self._ds, attr)

    def __len__(self) -> int:
        return len(self._ds)

    def __getitem__(self, key):
        n = self._ds.shape[self._check.axis(self._name)] if self._ds.ndim else 0
        if (isinstance(key, tuple) and key == ()) or key is Ellipsis:
            values = self._ds[()]
            if n:
                self._check.verify(self._name, self._ds, 0, n - 1, values)
            return values
        rng = _cell_range(key, self._check.axis(self._name), n)
        if rng is not None:
            self._check.verify(self._name, self._ds, *rng)
        return self._ds[key]

    def __array__(self, dtype=None, copy=None):
        values = self[()]
        return values if dtype is None else values.astype(dtype)


class VerifiedStatic:
    """A dataset written once (mesh, model, hot spots, …): its whole value is checked at the first read."""

    def __init__(self, ds, name: str, check: BlockCheck):
        self._ds, self._name, self._check = ds, name, check
        self._values = None

    def __getattr__(self, attr):
        return getattr(self._ds, attr)

    def __len__(self) -> int:
        return len(self._ds)

    def __getitem__(self, key):
        if self._values is None:
            self._values = self._check.verify_static(self._name, self._ds)
        if (isinstance(key, tuple) and key == ()) or key is Ellipsis:
            return self._values.copy() if isinstance(self._values, np.ndarray) else self._values
        return self._ds[key]

    def asstr(self, *args, **kwargs):
        self[()]
        return self._ds.asstr(*args, **kwargs)

    def __array__(self, dtype=None, copy=None):
        values = np.asarray(self[()])
        return values if dtype is None else values.astype(dtype)


class VerifiedGroup:
    """A group (or the file) of a finished store handing out its block datasets as :class:`VerifiedDataset`."""

    def __init__(self, group, check: BlockCheck):
        self._group, self._check = group, check

    def __getattr__(self, attr):
        return getattr(self._group, attr)

    def __getitem__(self, name):
        import h5py

        obj = self._group[name]
        if isinstance(obj, h5py.Group):
            return VerifiedGroup(obj, self._check)
        name = obj.name.lstrip("/") if isinstance(obj, h5py.Dataset) else ""
        if name and self._check.covers(name):
            return VerifiedDataset(obj, name, self._check)
        if name in self._check.static:
            return VerifiedStatic(obj, name, self._check)
        return obj

    def get(self, name, default=None):
        return self[name] if name in self._group else default

    def __contains__(self, name) -> bool:
        return name in self._group

    def __iter__(self):
        return iter(self._group)

    def __len__(self) -> int:
        return len(self._group)


def verified(h5, path: str) -> VerifiedGroup:
    """The open file of a finished store, its block datasets verified as they are read (module notes)."""
    return VerifiedGroup(h5, BlockCheck(h5, path))
