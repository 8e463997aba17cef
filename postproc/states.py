"""Full through-thickness states of a few cells (the hot spots), for plots and the report.

The envelope keeps only the governing values; for the cells a reviewer will
look at, the store also keeps every ply's mechanical and fixed stress state at
the three points of every case, and each chosen criterion's strength ratio there.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from shells.criteria import evaluate
from shells.recovery_reference import ply_states
from shells.recovery_tables import SectionTables


def cell_states(criteria: Sequence[type], tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray,
                R: np.ndarray, dT: np.ndarray, dM: np.ndarray, pres: np.ndarray,
                shear: np.ndarray | None = None) -> dict[str, np.ndarray]:
    """States and strength ratios of the given cells (``shear``: see :func:`shells.recovery_reference.ply_states`).

    Returns
    -------
    dict
        ``mech``, ``fixed`` (ncase, ncell, maxply, 3, 6) material-axis states (σ1, σ2, τ12, τ13, τ23, σ3);
        ``strain`` (ncase, ncell, maxply, 3, 3); ``z`` (ncell, maxply, 3);
        ``ratio`` (ncrit, ncase, ncell, maxply, 3) strength ratios (NaN past a cell's ply count).
    """
    ref = ply_states(tables, cell_sec, phi_deg, R, dT, dM, pres, shear)
    n, mp = len(cell_sec), tables.max_plies
    pidx = np.full((n, mp), -1, dtype=np.int64)
    for i, s in enumerate(cell_sec):
        pidx[i, :tables.nply[s]] = tables.first[s] + np.arange(tables.nply[s])
    mech = np.ascontiguousarray(np.nan_to_num(ref["mech"]).transpose(1, 0, 2, 3, 4))
    fixed = np.ascontiguousarray(np.nan_to_num(ref["fixed"]).transpose(1, 0, 2, 3, 4))
    ratios = np.stack([evaluate(c, mech, fixed, pidx, tables.params)[0].transpose(1, 0, 2, 3) for c in criteria])
    return {"mech": ref["mech"], "fixed": ref["fixed"], "strain": ref["strain"], "z": ref["z"], "ratio": ratios}
