"""Writing resultants files that plybridge reads back: HDF5 ``/resultants`` and XDMF series (tests, demo, tools)."""

from __future__ import annotations

import os
from typing import Sequence

import numpy as np

from shells.errors import ResultantsError

from bridge.atomic import atomic_h5
from bridge.definition.resultants import COMPONENTS, ResultantFields
from bridge.mesh.shell import ShellMesh
from bridge.recover.files import H5_DATASET

H5_CHUNK_CELLS = 65536


def resultant_arrays(R_case: np.ndarray, fields: ResultantFields = ResultantFields()) -> dict[str, np.ndarray]:
    """Split one case (n_cells, 8) into the named cell arrays of ``fields``.

    The inverse of :func:`bridge.recover.resultants.assemble`.
    """
    R_case = np.asarray(R_case, dtype=np.float64)
    return {name: (R_case[:, sl][:, 0] if sl.stop - sl.start == 1 else R_case[:, sl].copy())
            for name, sl, _ in fields.layout()}


def _check_cases(case_names: Sequence[str], R: np.ndarray) -> np.ndarray:
    R = np.asarray(R, dtype=np.float64)
    if R.ndim != 3 or R.shape[2] != 8 or R.shape[0] != len(case_names):
        raise ResultantsError(f"resultants must have shape ({len(case_names)}, cells, 8), got {R.shape}")
    if len(set(case_names)) != len(case_names):
        raise ResultantsError(f"duplicate case names {list(case_names)}")
    return R


def write_resultants_h5(path: str | os.PathLike, case_names: Sequence[str], R: np.ndarray) -> None:
    """Write resultants (n_cases, n_cells, 8) to HDF5 ``/resultants`` atomically.

    Chunks are 1 case × up to 65536 cells × 8, shuffle + gzip; attributes
    ``case_names`` and ``components`` (:data:`COMPONENTS`).
    """
    import h5py

    R = _check_cases(case_names, R)
    with atomic_h5(path) as h5:
        ds = h5.create_dataset(H5_DATASET, data=R, chunks=(1, max(1, min(R.shape[1], H5_CHUNK_CELLS)), 8),
                               compression="gzip", compression_opts=4, shuffle=True)
        # A dataset, not an attribute: thousands of names exceed HDF5's 64 KiB attribute limit.
        h5.create_dataset("case_names", data=np.array([str(c) for c in case_names], dtype=h5py.string_dtype()))
        ds.attrs["components"] = np.array(COMPONENTS, dtype=h5py.string_dtype())


def write_resultants_xdmf(path: str | os.PathLike, mesh: ShellMesh, case_names: Sequence[str], R: np.ndarray,
                          fields: ResultantFields = ResultantFields()) -> None:
    """Write resultants as an XDMF time series, one grid per case, arrays named by ``fields``."""
    from bridge.mesh.formats import xdmf

    R = _check_cases(case_names, R)
    xdmf.write_series(path, mesh, [(c, resultant_arrays(R[k], fields)) for k, c in enumerate(case_names)])
