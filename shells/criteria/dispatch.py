"""Criterion evaluation by registry code: the cached block driver and the calls the kernel makes.

The recovery kernel calls :func:`prepare_by_code` once per ply and
:func:`lanes_by_code` (lane forms, :mod:`shells.criteria.lanes`) or
:func:`generic_lanes` (:func:`ratio_by_code` point by point) with the integer
code of each chosen criterion. The branches below call the registered
functions as module globals, so numba compiles them into the kernel and caches
it across processes
(a kernel that takes criterion functions as arguments recompiles in every
process). The functions are taken from :data:`shells.criteria.registry.CRITERIA`
in registry order; the unpacking fails loudly if a criterion is added to the
registry without a branch here, and ``tests/test_recovery.py`` checks every
code against the criterion's own ``ratio``.

Numba's cache keys on this file only; :mod:`shells.numba_cache` keys the whole
cache folder on the sources of the package, so an edited criterion is never
served from a stale cache.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from .. import params as P
from ..errors import ResultantsError
from .lanes import GENERIC, LD, LR, OF, OM
from .registry import CRITERIA, code
from .state import NPOINT, NSTATE

(_r0, _r1, _r2, _r3, _r4, _r5, _r6, _r7, _r8, _r9, _r10, _r11, _r12, _r13) = (c.ratio for c in CRITERIA)
(_p0, _p1, _p2, _p3, _p4, _p5, _p6, _p7, _p8, _p9, _p10, _p11, _p12, _p13) = (c.prepare for c in CRITERIA)
(_l0, _l1, _l2, _l3, _l4, _l5, _l6, _l7, _l8, _l9, _l10, _l11, _l12, _l13) = (c.lanes for c in CRITERIA)


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


@njit(cache=True)
def prepare_by_code(code, p, out):
    """``CRITERIA[code].prepare(p, out)`` → the form of the criterion on a ply (:mod:`shells.criteria.lanes`)."""
    if code == 0:
        return _p0(p, out)
    if code == 1:
        return _p1(p, out)
    if code == 2:
        return _p2(p, out)
    if code == 3:
        return _p3(p, out)
    if code == 4:
        return _p4(p, out)
    if code == 5:
        return _p5(p, out)
    if code == 6:
        return _p6(p, out)
    if code == 7:
        return _p7(p, out)
    if code == 8:
        return _p8(p, out)
    if code == 9:
        return _p9(p, out)
    if code == 10:
        return _p10(p, out)
    if code == 11:
        return _p11(p, out)
    if code == 12:
        return _p12(p, out)
    if code == 13:
        return _p13(p, out)
    return GENERIC


@njit(cache=True)
def lanes_by_code(code, w, nl, c):
    """``CRITERIA[code].lanes(w, nl, c)``: ratios and modes of lanes 0 … nl − 1 into ``w`` (a FAST form)."""
    if code == 0:
        _l0(w, nl, c)
    elif code == 1:
        _l1(w, nl, c)
    elif code == 2:
        _l2(w, nl, c)
    elif code == 3:
        _l3(w, nl, c)
    elif code == 4:
        _l4(w, nl, c)
    elif code == 5:
        _l5(w, nl, c)
    elif code == 6:
        _l6(w, nl, c)
    elif code == 7:
        _l7(w, nl, c)
    elif code == 8:
        _l8(w, nl, c)
    elif code == 9:
        _l9(w, nl, c)
    elif code == 10:
        _l10(w, nl, c)
    elif code == 11:
        _l11(w, nl, c)
    elif code == 12:
        _l12(w, nl, c)
    elif code == 13:
        _l13(w, nl, c)


@njit(cache=True)
def generic_lanes(code, w, nl, p):
    """The GENERIC form: ``ratio_by_code`` point by point on the lanes' states in ``w``, property vector ``p``."""
    sm = np.empty(NSTATE)
    sf = np.empty(NSTATE)
    for l in range(nl):
        for a in range(NSTATE):
            sm[a] = w[OM[a] + l]
            sf[a] = w[OF[a] + l]
        r, m = ratio_by_code(code, sm, sf, p)
        w[LR + l] = r
        w[LD + l] = m


@njit(cache=True, parallel=True)
def evaluate_block(crit_code, point_mask, sm, sf, pidx, params, out_sr, out_mode):
    """Strength ratios of one criterion over a block of cells × cases × plies × points.

    Parameters
    ----------
    crit_code : int
        Registry code of the criterion (:func:`shells.criteria.registry.code`).
    point_mask : bool (3,)
        Points (bottom, middle, top) the criterion applies at; others get
        ``sr = inf``, ``mode = -1``.
    sm, sf : float64 (ncell, ncase, nply, 3, 6)
        Mechanical and fixed material-axis states, order (σ1, σ2, τ12, τ13, τ23, σ3).
    pidx : int64 (ncell, nply)
        Row of ``params`` for each cell's ply; -1 past a cell's ply count
        (→ ``sr = NaN``, ``mode = -1``).
    params : float64 (nrows, NPARAM)
        Property vectors (:mod:`shells.params`).
    out_sr : float64 (ncell, ncase, nply, 3)
        Strength ratios, written in place.
    out_mode : int8 (ncell, ncase, nply, 3)
        Governing mode indices, written in place.
    """
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
    """Strength ratios and modes of ``criterion`` over ply states (runs :func:`evaluate_block`).

    Parameters
    ----------
    criterion : Criterion subclass
        Its ``points`` select the through-thickness points.
    sm, sf, pidx, params : array_like
        As in :func:`evaluate_block`; copied only when not already contiguous
        of the right dtype (never modified).

    Returns
    -------
    sr : float64 (ncell, ncase, nply, 3)
    mode : int8 (ncell, ncase, nply, 3)
    """
    sm = np.ascontiguousarray(sm, dtype=np.float64)
    sf = np.ascontiguousarray(sf, dtype=np.float64)
    pidx = np.ascontiguousarray(pidx, dtype=np.int64)
    params = np.ascontiguousarray(params, dtype=np.float64)
    if sm.ndim != 5 or sm.shape[3:] != (NPOINT, NSTATE) or sf.shape != sm.shape:
        raise ResultantsError(
            f"ply states must both have shape (ncell, ncase, nply, 3, 6); got {sm.shape} and {sf.shape}; "
            "fix the recovery output")
    if pidx.shape != (sm.shape[0], sm.shape[2]) or params.ndim != 2 or params.shape[1] != P.NPARAM:
        raise ResultantsError(
            f"ply index {pidx.shape} / property table {params.shape} do not match states {sm.shape}; "
            f"expected ({sm.shape[0]}, {sm.shape[2]}) and (nrows, {P.NPARAM})")
    if pidx.size and pidx.max() >= params.shape[0]:
        raise ResultantsError(f"ply index {pidx.max()} exceeds the {params.shape[0]} property rows")
    mask = np.zeros(NPOINT, dtype=np.bool_)
    mask[list(criterion.points)] = True
    out_sr = np.empty(sm.shape[:4])
    out_mode = np.empty(sm.shape[:4], dtype=np.int8)
    evaluate_block(code(criterion.name), mask, sm, sf, pidx, params, out_sr, out_mode)
    return out_sr, out_mode
