"""Criterion evaluation by registry code, for the fused recovery kernel.

The kernel calls :func:`ratio_by_code` with the integer code of each chosen
criterion. The branches below call the registered ``ratio`` functions as
module globals, so numba inlines them and caches the kernel across processes
(a kernel that takes criterion functions as arguments recompiles in every
process). The functions are taken from :data:`shells.criteria.CRITERIA` in
registry order; the unpacking fails loudly if a criterion is added to the
registry without a branch here, and ``tests/test_recovery.py`` checks every
code against the criterion's own ``ratio``.

Numba's cache keys on this file only: after editing a criterion module, clear
``NUMBA_CACHE_DIR`` (see DEVELOPERS.md).
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from . import CRITERIA, code
from .base import evaluate as _evaluate

(_r0, _r1, _r2, _r3, _r4, _r5, _r6, _r7, _r8, _r9, _r10, _r11, _r12, _r13) = (c.ratio for c in CRITERIA)


@njit(cache=True)
def ratio_by_code(code, sm, sf, p):
    """``CRITERIA[code].ratio(sm, sf, p)`` → (strength ratio, mode)."""
    if code == 0:
        return _r0(sm, sf, p)
    if code == 1:
        return _r1(sm, sf, p)
    if code == 2:
        return _r2(sm, sf, p)
    if code == 3:
        return _r3(sm, sf, p)
    if code == 4:
        return _r4(sm, sf, p)
    if code == 5:
        return _r5(sm, sf, p)
    if code == 6:
        return _r6(sm, sf, p)
    if code == 7:
        return _r7(sm, sf, p)
    if code == 8:
        return _r8(sm, sf, p)
    if code == 9:
        return _r9(sm, sf, p)
    if code == 10:
        return _r10(sm, sf, p)
    if code == 11:
        return _r11(sm, sf, p)
    if code == 12:
        return _r12(sm, sf, p)
    if code == 13:
        return _r13(sm, sf, p)
    return np.inf, -1


@njit(cache=True, parallel=True)
def evaluate_block_by_code(crit_code, point_mask, sm, sf, pidx, params, out_sr, out_mode):
    """:func:`shells.criteria.base.evaluate_block` for the criterion of registry code ``crit_code`` (cached)."""
    ncell, ncase, nply = sm.shape[0], sm.shape[1], sm.shape[2]
    for c in prange(ncell):
        for k in range(nply):
            row = pidx[c, k]
            for j in range(ncase):
                for q in range(3):
                    if row < 0:
                        out_sr[c, j, k, q] = np.nan
                        out_mode[c, j, k, q] = -1
                    elif not point_mask[q]:
                        out_sr[c, j, k, q] = np.inf
                        out_mode[c, j, k, q] = -1
                    else:
                        r, m = ratio_by_code(crit_code, sm[c, j, k, q], sf[c, j, k, q], params[row])
                        out_sr[c, j, k, q] = r
                        out_mode[c, j, k, q] = m


def evaluate(criterion, sm, sf, pidx, params):
    """Strength ratios and modes of ``criterion`` over ply states (see :func:`shells.criteria.base.evaluate`).

    Runs the cached driver by registry code.
    """
    k = code(criterion.name)
    return _evaluate(criterion, sm, sf, pidx, params,
                     block=lambda *args: evaluate_block_by_code(k, *args))
