"""Criterion evaluation by registry code: the cached block driver and the calls the kernel makes.

The recovery kernel calls :func:`prepare_table` once (the prepared forms of
:mod:`shells.criteria.prepared` on every ply), then at every point
:func:`point_by_code` (FAST) or :func:`ratio_by_code` (GENERIC) with the
integer code of each chosen criterion. The branches below call the registered
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
from .prepared import FAST, GENERIC, NCONST
from .registry import CRITERIA, code
from .state import NPOINT, NSTATE

(_r0, _r1, _r2, _r3, _r4, _r5, _r6, _r7, _r8, _r9, _r10, _r11, _r12, _r13) = (c.ratio for c in CRITERIA)
(_p0, _p1, _p2, _p3, _p4, _p5, _p6, _p7, _p8, _p9, _p10, _p11, _p12, _p13) = (c.prepare for c in CRITERIA)
(_q0, _q1, _q2, _q3, _q4, _q5, _q6, _q7, _q8, _q9, _q10, _q11, _q12, _q13) = (c.point for c in CRITERIA)
(_i0, _i1, _i2, _i3, _i4, _i5, _i6, _i7, _i8, _i9, _i10, _i11, _i12, _i13) = (c.inside for c in CRITERIA)


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
    """``CRITERIA[code].prepare(p, out)`` → the form of the criterion on a ply (:mod:`shells.criteria.prepared`)."""
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


@njit(cache=True, inline="always")
def point_by_code(code, sm, sf, c, m):
    """``CRITERIA[code].point(sm, sf, c, m)``: (R, mode) at a point of a ply whose form is FAST."""
    if code == 0:
        return _q0(sm, sf, c, m)
    if code == 1:
        return _q1(sm, sf, c, m)
    if code == 2:
        return _q2(sm, sf, c, m)
    if code == 3:
        return _q3(sm, sf, c, m)
    if code == 4:
        return _q4(sm, sf, c, m)
    if code == 5:
        return _q5(sm, sf, c, m)
    if code == 6:
        return _q6(sm, sf, c, m)
    if code == 7:
        return _q7(sm, sf, c, m)
    if code == 8:
        return _q8(sm, sf, c, m)
    if code == 9:
        return _q9(sm, sf, c, m)
    if code == 10:
        return _q10(sm, sf, c, m)
    if code == 11:
        return _q11(sm, sf, c, m)
    if code == 12:
        return _q12(sm, sf, c, m)
    if code == 13:
        return _q13(sm, sf, c, m)
    return np.inf, -1


@njit(cache=True, inline="always")
def inside_by_code(code, sm, sf, c, m, lam):
    """``CRITERIA[code].inside(sm, sf, c, m, lam)`` on a ply whose form is FAST: True only when the ratio is known
    to exceed ``lam`` (:mod:`shells.criteria.prepared`)."""
    if code == 0:
        return _i0(sm, sf, c, m, lam)
    if code == 1:
        return _i1(sm, sf, c, m, lam)
    if code == 2:
        return _i2(sm, sf, c, m, lam)
    if code == 3:
        return _i3(sm, sf, c, m, lam)
    if code == 4:
        return _i4(sm, sf, c, m, lam)
    if code == 5:
        return _i5(sm, sf, c, m, lam)
    if code == 6:
        return _i6(sm, sf, c, m, lam)
    if code == 7:
        return _i7(sm, sf, c, m, lam)
    if code == 8:
        return _i8(sm, sf, c, m, lam)
    if code == 9:
        return _i9(sm, sf, c, m, lam)
    if code == 10:
        return _i10(sm, sf, c, m, lam)
    if code == 11:
        return _i11(sm, sf, c, m, lam)
    if code == 12:
        return _i12(sm, sf, c, m, lam)
    if code == 13:
        return _i13(sm, sf, c, m, lam)
    return False


@njit(cache=True, inline="always")
def ratio_by_form(form, code, sm, sf, c, m, p):
    """(R, mode) of criterion ``code`` at a point of a ply of prepared form ``form`` (not SKIP): FAST by its
    ``point`` with the constants in row ``m`` of ``c``, GENERIC by its ``ratio`` on the property vector ``p``."""
    if form == FAST:
        return point_by_code(code, sm, sf, c, m)
    return ratio_by_code(code, sm, sf, p)


@njit(cache=True)
def prepare_table(codes, params):
    """Forms (nrows, ncrit) and constants (nrows, ncrit, NCONST) of the criteria ``codes`` on every ply row."""
    nrow, ncrit = params.shape[0], codes.shape[0]
    forms = np.empty((nrow, ncrit), np.int64)
    consts = np.zeros((nrow, ncrit, NCONST))
    for row in range(nrow):
        for m in range(ncrit):
            forms[row, m] = prepare_by_code(codes[m], params[row], consts[row, m])
    return forms, consts


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
