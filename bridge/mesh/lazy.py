"""An HDF5 dataset left in its file and read by rows on demand (large XDMF series read block by block)."""

from __future__ import annotations

import numpy as np


class LazyH5:
    """A dataset ``name`` of the HDF5 file ``path``, read when indexed (``a[rows]``) or converted (``np.asarray``).

    Rows are a slice or increasing indices (what h5py reads directly). A dataset of shape (n, 1, k) reads as
    (n, k) (how 2-component arrays are written for VTK's reader).
    """

    def __init__(self, path: str, name: str, shape: tuple):
        self.path, self.name = path, name
        self._squeeze = len(shape) == 3 and shape[1] == 1
        self.shape = (shape[0], shape[2]) if self._squeeze else tuple(shape)
        self.ndim = len(self.shape)

    def __len__(self) -> int:
        return self.shape[0]

    def __getitem__(self, rows) -> np.ndarray:
        import h5py

        with h5py.File(self.path, "r", locking=False) as h5:
            out = h5[self.name][rows]
        return out[:, 0] if self._squeeze and out.ndim == 3 else out

    def __array__(self, dtype=None, copy=None) -> np.ndarray:
        out = self[()]
        return out if dtype is None else out.astype(dtype)

    def eager(self, dims) -> np.ndarray:
        """The whole dataset reshaped to the XML dimensions ``dims`` (when they differ from the stored shape)."""
        return np.asarray(self).reshape(dims)
