"""The results store: one self-describing HDF5 file per recovery run (docs/results.md).

Written block by block into a temporary file beside the target and renamed
when complete, so the target path only ever holds a complete store. Datasets
are chunked along cells (and cases) and compressed (shuffle + gzip).
"""

from __future__ import annotations

import contextlib
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator, Mapping, Sequence

import numpy as np

from shells.errors import StoreError

from bridge.atomic import atomic_path

FORMAT = "plybridge-results"
LAYOUT_VERSION = 1
CHUNK_CELLS = 16384


def _h5():
    import h5py

    return h5py


def _strings(values: Sequence[str]) -> np.ndarray:
    return np.array([str(v) for v in values], dtype=_h5().string_dtype())


@dataclass(frozen=True)
class StoreLayout:
    """Sizes that fix the dataset shapes of a store."""

    n_cells: int
    max_plies: int
    case_names: tuple[str, ...]
    store_plies: bool = False
    n_criteria: int = 1
    chunk_cells: int = CHUNK_CELLS

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


def _name_codes(env, cells, case_names) -> None:
    """Attributes ``names`` on the integer-code datasets, so the store explains its own codes."""
    from shells.criteria import CRITERIA

    names = {
        "case": _strings(case_names),
        "point": _strings(("bottom", "middle", "top")),
        "criterion": _strings([c.name for c in CRITERIA]),
        "mode": json.dumps({c.name: list(c.modes) for c in CRITERIA}),
    }
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
        if layout.store_plies:
            plies = h5.create_group("plies")
            pc = max(1, min(n, max(1, 2 ** 20 // (mp * 3 * 3 * 8))))
            for name, k in PLIES.items():
                plies.create_dataset(name, shape=(layout.n_cases, n, mp, 3, k), dtype=np.float64,
                                     chunks=(1, pc, mp, 3, k), fillvalue=np.nan, **opts)

    def write_block(self, start: int, stop: int, envelope: Mapping[str, np.ndarray],
                    cells: Mapping[str, np.ndarray], plies: Mapping[str, np.ndarray] | None = None) -> None:
        """Write cells start … stop − 1 (envelope rows, cell summary, optionally ply states)."""
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

    def matches(self) -> bool:
        """Whether the open file has every dataset of the layout with the layout's shape."""
        n, mp = self.layout.n_cells, self.layout.max_plies
        want = {**{f"envelope/{k}": (n, mp) for k in ENVELOPE}, **{f"cells/{k}": (n,) for k in CELLS},
                "cells/case_margin": (n, self.layout.n_cases),
                "cells/criterion_margin": (n, self.layout.n_criteria)}
        if self.layout.store_plies:
            want.update({f"plies/{k}": (self.layout.n_cases, n, mp, 3, c) for k, c in PLIES.items()})
        return all(key in self.h5 and self.h5[key].shape == shape for key, shape in want.items())

    def write_static(self, name: str, data: np.ndarray | Mapping[str, np.ndarray]) -> None:
        """A dataset (or a group of datasets) written once: per-cell model data, mesh geometry."""
        if isinstance(data, Mapping):
            group = self.h5.require_group(name)
            for key, arr in data.items():
                group.create_dataset(key, data=np.asarray(arr), compression="gzip", shuffle=True)
        else:
            self.h5.create_dataset(name, data=np.asarray(data), compression="gzip", shuffle=True)

    def write_meta(self, meta: Mapping[str, Any]) -> None:
        """Root attributes: scalars and strings as they are, anything else as JSON text."""
        self.h5.attrs["format"] = FORMAT
        self.h5.attrs["layout_version"] = LAYOUT_VERSION
        for key, value in meta.items():
            if isinstance(value, (str, int, float, bool, np.integer, np.floating)):
                self.h5.attrs[key] = value
            else:
                self.h5.attrs[key] = json.dumps(value, default=_json_default)


def _json_default(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, (np.integer, np.floating, np.bool_)):
        return obj.item()
    raise TypeError(f"not JSON-serialisable: {type(obj).__name__}")


@contextlib.contextmanager
def create_store(path: str | Path, layout: StoreLayout) -> Iterator[StoreWriter]:
    """Open a new store at a temporary path; renamed onto ``path`` only when the block exits cleanly."""
    h5py = _h5()
    with atomic_path(path, suffix=".h5") as tmp:
        with h5py.File(tmp, "w") as h5:
            yield StoreWriter(h5, layout)


def mesh_group(points: np.ndarray, blocks: Sequence[tuple[str, np.ndarray]]) -> dict[str, np.ndarray]:
    """Geometry of the mesh as datasets: points and one connectivity array per block, in cell order."""
    out = {"points": np.asarray(points, dtype=np.float64)}
    for k, (ctype, conn) in enumerate(blocks):
        out[f"block{k:03d}_{ctype}"] = np.asarray(conn, dtype=np.int64)
    return out


class StoreReader:
    """Read access to a results store (opened read-only; use as a context manager)."""

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
        if self.h5.attrs.get("format") != FORMAT:
            self.h5.close()
            raise StoreError(f"not a plybridge results store (attribute format != {FORMAT!r})", self.path)

    def __enter__(self) -> "StoreReader":
        return self

    def __exit__(self, *exc) -> None:
        self.h5.close()

    def meta(self, key: str, default: Any = None) -> Any:
        value = self.h5.attrs.get(key, default)
        if isinstance(value, str) and value[:1] in "[{":
            return json.loads(value)
        return value

    @property
    def case_names(self) -> tuple[str, ...]:
        return tuple(s.decode() if isinstance(s, bytes) else str(s) for s in self.h5["cases"][()])

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


def materials_from_meta(meta: Mapping[str, Mapping[str, Any]]):
    """Rebuild material dataclasses from the store's ``materials`` attribute (name → kind and fields)."""
    from shells.materials import Core, Isotropic, Orthotropic

    classes = {"ply": Orthotropic, "isotropic": Isotropic, "core": Core}
    out = {}
    for name, entry in meta.items():
        fields = {k: v for k, v in entry.items() if k != "kind"}
        out[name] = classes[entry["kind"]](name=name, **fields)
    return out
