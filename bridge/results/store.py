"""The results store: one self-describing HDF5 file per recovery run (docs/results.md).

Written block by block into a temporary file beside the target and renamed
when complete, so the target path only ever holds a complete store. Datasets
are chunked along cells (and cases) and compressed (shuffle + gzip).
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from postproc.run_meta import RunMeta, meta_from_json, meta_to_json
from shells.errors import StoreError

FORMAT = "plybridge-results"
#: Version of the store layout. 2: typed run metadata in /meta/run, section and material tables in /sections and
#: /materials (layout 1 kept untyped JSON attributes). Readers refuse any other version.
LAYOUT_VERSION = 2
CHUNK_CELLS = 16384


def _h5():
    import h5py

    return h5py


def _strings(values: Sequence[str]) -> np.ndarray:
    return np.array([str(v) for v in values], dtype=_h5().string_dtype())


@dataclass(frozen=True)
class BlockDataset:
    """A dataset written block by block beside the fixed ones (progressive factors, restricted envelopes, the
    governing misalignment): its path, its shape after the cell axis, its number type and, for integer codes,
    what its ``names`` attribute lists (``case``, ``point``, ``criterion``, ``mode``)."""

    path: str
    tail: tuple[int, ...] = ()
    dtype: str = "f8"
    names: str = ""


@dataclass(frozen=True)
class StoreLayout:
    """Sizes that fix the dataset shapes of a store."""

    n_cells: int
    max_plies: int
    case_names: tuple[str, ...]
    store_plies: bool = False
    n_criteria: int = 1
    chunk_cells: int = CHUNK_CELLS
    extra: tuple[BlockDataset, ...] = ()

    @property
    def n_cases(self) -> int:
        return len(self.case_names)

    @property
    def chunk(self) -> int:
        """Cells per chunk along the cell axis (run blocks are whole multiples of it)."""
        return max(1, min(self.n_cells, self.chunk_cells, CHUNK_CELLS))


ENVELOPE = {"strength_ratio": np.float64, "margin": np.float64, "case": np.int32, "point": np.int8,
            "criterion": np.int8, "mode": np.int8}
CELLS = {"min_margin": np.float64, "critical_ply": np.int32, "strength_ratio": np.float64, "case": np.int32,
         "point": np.int8, "criterion": np.int8, "mode": np.int8, "flagged": np.bool_}
PLIES = {"stress": 3, "strain": 3, "transverse_shear": 2}


#: Root attribute listing the paths of the extra block datasets, in the order of the completeness checksums.
EXTRA_ATTR = "block_extra"


def _code_names(h5, case_names) -> dict:
    """What the ``names`` attribute of each kind of integer-code dataset holds."""
    from shells.criteria import CRITERIA

    cases = _strings(case_names)
    if sum(len(str(c).encode()) + 16 for c in case_names) > 32 * 1024:  # HDF5 attributes stop at 64 KiB
        cases = h5["cases"].ref  # an object reference to the /cases dataset instead of a copy
    return {
        "case": cases,
        "point": _strings(("bottom", "middle", "top")),
        "criterion": _strings([c.name for c in CRITERIA]),
        "mode": json.dumps({c.name: list(c.modes) for c in CRITERIA}),
    }


def _name_codes(env, cells, case_names) -> None:
    """Attributes ``names`` on the integer-code datasets, so the store explains its own codes."""
    names = _code_names(env.file, case_names)
    for group in (env, cells):
        for key, value in names.items():
            group[key].attrs["names"] = value
    cells["case_margin"].attrs["names"] = names["case"]
    cells["criterion_margin"].attrs["names"] = names["criterion"]


class StoreWriter:
    """Create the datasets of a store in an open h5py file and fill them by cell blocks."""

    def __init__(self, h5, layout: StoreLayout, create: bool = True):
        self.h5 = h5
        self.layout = layout
        if create:
            self._create()

    def _create(self) -> None:
        h5, layout = self.h5, self.layout
        n, mp = layout.n_cells, layout.max_plies
        cc = layout.chunk
        opts = dict(compression="gzip", compression_opts=3, shuffle=True)
        h5.create_dataset("cases", data=_strings(layout.case_names))
        env = h5.create_group("envelope")
        for name, dtype in ENVELOPE.items():
            fill = np.nan if np.dtype(dtype).kind == "f" else -1
            env.create_dataset(name, shape=(n, mp), dtype=dtype, chunks=(cc, mp), fillvalue=fill, **opts)
        cells = h5.create_group("cells")
        for name, dtype in CELLS.items():
            fill = np.nan if np.dtype(dtype).kind == "f" else (0 if dtype == np.bool_ else -1)
            cells.create_dataset(name, shape=(n,), dtype=dtype, chunks=(cc,), fillvalue=fill, **opts)
        cells.create_dataset("case_margin", shape=(n, layout.n_cases), dtype=np.float64,
                             chunks=(cc, max(1, min(layout.n_cases, 64))), fillvalue=np.nan, **opts)
        cells.create_dataset("criterion_margin", shape=(n, layout.n_criteria), dtype=np.float64,
                             chunks=(cc, layout.n_criteria), fillvalue=np.nan, **opts)
        _name_codes(env, cells, layout.case_names)
        codes = _code_names(h5, layout.case_names)
        for x in layout.extra:
            dtype = np.dtype(x.dtype)
            ds = h5.create_dataset(x.path, shape=(n,) + tuple(x.tail), dtype=dtype, chunks=(cc,) + tuple(x.tail),
                                   fillvalue=np.nan if dtype.kind == "f" else -1, **opts)
            if x.names:
                ds.attrs["names"] = codes[x.names]
        h5.attrs[EXTRA_ATTR] = json.dumps([x.path for x in layout.extra])
        if layout.store_plies:
            plies = h5.create_group("plies")
            pc = max(1, min(n, max(1, 2 ** 20 // (mp * 3 * 3 * 8))))
            for name, k in PLIES.items():
                plies.create_dataset(name, shape=(layout.n_cases, n, mp, 3, k), dtype=np.float64,
                                     chunks=(1, pc, mp, 3, k), fillvalue=np.nan, **opts)

    def write_block(self, start: int, stop: int, envelope: Mapping[str, np.ndarray],
                    cells: Mapping[str, np.ndarray], plies: Mapping[str, np.ndarray] | None = None,
                    extra: Mapping[str, np.ndarray] | None = None) -> None:
        """Write cells start … stop − 1 (envelope rows, cell summary, optionally ply states, the extra datasets
        by path)."""
        for x in self.layout.extra:
            self.h5[x.path][start:stop] = extra[x.path]
        for name in ENVELOPE:
            self.h5["envelope"][name][start:stop] = envelope[name]
        for name in (*CELLS, "case_margin", "criterion_margin"):
            self.h5["cells"][name][start:stop] = cells[name]
        if plies is not None and self.layout.store_plies:
            for name in PLIES:
                self.h5["plies"][name][:, start:stop] = plies[name]

    def read_cells(self, start: int, stop: int) -> dict[str, np.ndarray]:
        """The cell summary of cells start … stop − 1 as written (to rebuild a resumed run's summary)."""
        return {name: self.h5["cells"][name][start:stop] for name in (*CELLS, "case_margin", "criterion_margin")}

    def read_extra(self, start: int, stop: int) -> dict[str, np.ndarray]:
        """The extra datasets of cells start … stop − 1 as written, by path."""
        return {x.path: self.h5[x.path][start:stop] for x in self.layout.extra}

    def matches(self) -> bool:
        """Whether the open file has every dataset of the layout with the layout's shape."""
        n, mp = self.layout.n_cells, self.layout.max_plies
        want = {**{f"envelope/{k}": (n, mp) for k in ENVELOPE}, **{f"cells/{k}": (n,) for k in CELLS},
                "cells/case_margin": (n, self.layout.n_cases),
                "cells/criterion_margin": (n, self.layout.n_criteria)}
        if self.layout.store_plies:
            want.update({f"plies/{k}": (self.layout.n_cases, n, mp, 3, c) for k, c in PLIES.items()})
        want.update({x.path: (n,) + tuple(x.tail) for x in self.layout.extra})
        return (all(key in self.h5 and self.h5[key].shape == shape for key, shape in want.items())
                and extra_paths(self.h5) == [x.path for x in self.layout.extra])

    def write_static(self, name: str, data: np.ndarray | Mapping[str, np.ndarray]) -> None:
        """A dataset (or a group of datasets) written once: per-cell model data, mesh geometry."""
        if isinstance(data, Mapping):
            group = self.h5.require_group(name)
            for key, arr in data.items():
                group.create_dataset(key, data=np.asarray(arr), compression="gzip", shuffle=True)
        else:
            self.h5.create_dataset(name, data=np.asarray(data), compression="gzip", shuffle=True)

    def write_meta(self, meta: RunMeta) -> None:
        """The run's metadata (``/meta/run``, JSON text) and a few root attributes for generic HDF5 tools."""
        self.h5.attrs["format"] = FORMAT
        self.h5.attrs["layout_version"] = LAYOUT_VERSION
        for key, value in (("title", meta.title), ("units", meta.units), ("created", meta.provenance.created),
                           ("caution", meta.caution)):
            self.h5.attrs[key] = value
        group = self.h5.require_group("meta")
        group.create_dataset("run", data=meta_to_json(meta), dtype=_h5().string_dtype())
        group.create_dataset("criteria", data=_strings([c.name for c in meta.criteria]))


def extra_paths(h5) -> list[str]:
    """Paths of the extra block datasets of an open store, in checksum order (empty for a store without)."""
    raw = h5.attrs.get(EXTRA_ATTR)
    if raw is None:
        return []
    try:
        paths = json.loads(raw if isinstance(raw, str) else raw.decode())
    except (ValueError, AttributeError):
        raise StoreError(f"the attribute {EXTRA_ATTR} is damaged; run plybridge recover again") from None
    if not isinstance(paths, list) or not all(isinstance(p, str) and p in h5 for p in paths):
        raise StoreError(f"the attribute {EXTRA_ATTR} names datasets the store lacks; run plybridge recover again")
    return paths


def section_tables(tables, sections) -> dict[str, np.ndarray]:
    """The ``/sections`` datasets: the kernels' ply table and z-table, and each section's stiffness.

    Parameters
    ----------
    tables : shells.recovery_tables.SectionTables
    sections : sequence of shells.section.Section
        In section-id order.
    """
    out = {name: np.asarray(value) for name, value in tables.arrays._asdict().items()}
    if tables.share is not None:
        out["share"] = np.asarray(tables.share)
    for name in ("A", "B", "D"):
        out[name] = np.array([getattr(s.props, name) for s in sections])
    out["H"] = np.array([s.H for s in sections])
    return out


def material_tables(materials: Mapping) -> dict[str, np.ndarray]:
    """The ``/materials`` datasets: names and kernel property vectors (shells.params order) of every material."""
    return {"names": _strings(list(materials)), "params": np.array([m.params() for m in materials.values()])}


def mesh_group(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> dict[str, np.ndarray]:
    """Geometry of the mesh as datasets: points and one connectivity array per block, in cell order."""
    out = {"points": np.asarray(points, dtype=np.float64)}
    for k, (ctype, conn) in enumerate(blocks):
        out[f"block{k:03d}_{ctype}"] = np.asarray(conn, dtype=np.int64)
    return out


class StoreReader:
    """Read access to a results store (opened read-only; use as a context manager).

    This is the one place where a store is opened for reading: ``render``, ``plot``, ``report``, ``recover
    --view`` and the Python API all come through here, so checks of a finished store belong in
    :meth:`_check`; the block datasets read through :attr:`h5` are verified against their checksums as they
    are read (:mod:`bridge.results.verified`).
    """

    def __init__(self, path: str | Path):
        h5py = _h5()
        self.path = str(path)
        try:
            self.h5 = h5py.File(self.path, "r", locking=False)
        except FileNotFoundError:
            raise StoreError("no such results store; run plybridge recover first", self.path) from None
        except OSError:
            raise StoreError("not an HDF5 file (or a damaged one); give a store written by plybridge recover",
                             self.path) from None
        try:
            self._check()
        except BaseException:
            self.h5.close()
            raise
        from bridge.results.verified import verified

        self._file = self.h5
        self.h5 = verified(self._file, self.path)   # block datasets verified against /check as they are read

    def _check(self) -> None:
        """Refuse what is not a complete store of this layout (one line naming the fix)."""
        if self.h5.attrs.get("format") != FORMAT:
            raise StoreError(f"not a plybridge results store (attribute format != {FORMAT!r}); give a store "
                             "written by plybridge recover", self.path)
        version = self.h5.attrs.get("layout_version")
        if version != LAYOUT_VERSION:
            older = isinstance(version, (int, np.integer)) and version < LAYOUT_VERSION
            raise StoreError(f"results store layout {version} {'is older than' if older else 'differs from'} the "
                             f"layout this plybridge reads ({LAYOUT_VERSION}); run plybridge recover again to "
                             "rewrite it", self.path)
        if "meta/run" not in self.h5:
            raise StoreError("the store has no run metadata (/meta/run); run plybridge recover again", self.path)
        self.verify_complete()

    def verify_complete(self) -> None:
        """Refuse a store that breaks the loading rules or is incomplete (:mod:`bridge.results.complete`)."""
        from bridge.results.complete import check_complete

        check_complete(self.h5, self.path)

    def __enter__(self) -> "StoreReader":
        return self

    def __exit__(self, *exc) -> None:
        self._file.close()

    @cached_property
    def run(self) -> RunMeta:
        """The run's metadata (read once)."""
        raw = self.h5["meta/run"][()]
        try:
            return meta_from_json(raw.decode("utf-8") if isinstance(raw, bytes) else str(raw))
        except ValueError as err:
            raise StoreError(f"the run metadata (/meta/run) is damaged ({err}); run plybridge recover again",
                             self.path) from None

    @property
    def case_names(self) -> tuple[str, ...]:
        return tuple(s.decode() if isinstance(s, bytes) else str(s) for s in self.h5["cases"][()])

    def tables(self):
        """The :class:`shells.recovery_tables.SectionTables` the run recovered with (from ``/sections``)."""
        from shells.recovery_args import SectionArrays
        from shells.recovery_tables import SectionTables

        g = self.h5["sections"]
        names = tuple(s.name for s in self.run.sections)
        return SectionTables(SectionArrays(*(np.ascontiguousarray(g[name][()]) for name in SectionArrays._fields)),
                             names=names, share=g["share"][()] if "share" in g else None)

    def section_matrix(self, name: str, section: int) -> np.ndarray:
        """A, B, D (3, 3) or H (2, 2) of a section, laminate axes."""
        return self.h5[f"sections/{name}"][section]

    def material_params(self, name: str) -> np.ndarray:
        """The kernel property vector (shells.params order) of a material."""
        names = [s.decode() if isinstance(s, bytes) else str(s) for s in self.h5["materials/names"][()]]
        return self.h5["materials/params"][names.index(name)]

    def array(self, name: str) -> np.ndarray:
        if name not in self.h5:
            raise StoreError(f"the store has no dataset /{name}; was it written with the options needed?",
                             self.path)
        return self.h5[name][()]

    def has(self, name: str) -> bool:
        return name in self.h5

    def mesh(self) -> tuple[np.ndarray, list[tuple[str, np.ndarray]]]:
        group = self.h5["mesh"]
        blocks = [(key.split("_", 1)[1], group[key][()]) for key in sorted(group) if key.startswith("block")]
        return group["points"][()], blocks

