"""Exact strength ratios of the plies that can fail at a step of the ply discount (:mod:`shells.progressive`),
through the prepared per-ply forms of the criteria (:mod:`shells.criteria.prepared`), as the recovery kernel
evaluates them.

One compiled call per step (:func:`exact_step`) takes the candidate plies in increasing order of their lower
bound and evaluates them while the bound does not rule out a failure at this step. Kept apart from the parallel
kernel: the criteria are not typed again inside the kernel's parallel loop (a shorter cold compile). One call
per step rather than one per ply, the states copied into work arrays, and a criterion without a prepared form
on the row called out of line on the parent arrays: each of these keeps call and reference-counting work off
the evaluations (measured together: the discount 20 % faster than with one call per ply; bench/recover_bench.py).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .criteria.dispatch import point_by_code, ratio_by_code
from .criteria.prepared import FAST, SKIP
from .numba_cache import configure

configure()

#: Ratios within this relative distance of the smallest fail in the same step (plies of a symmetric stack).
TIE = 1e-9


@njit(cache=True)
def generic_at(code, bm, bf, k, pt, params, row):
    """``ratio_by_code`` on the states of ply slot ``k`` at point ``pt`` (the views are made here, out of line)."""
    return ratio_by_code(code, bm[k, pt], bf[k, pt], params[row])


@njit(cache=True, inline="always")
def ply_ratios(codes, masks, middle, forms, consts, params, row, bm, bf, k, r, crit, mode, sm, sf):
    """The lowest ratio of ply slot ``k`` (table row ``row``) over the criteria and points, from (r, crit, mode).

    Parameters
    ----------
    codes : int64 (ncrit,), masks : bool (ncrit, 3)
        Criteria and the points (bottom, middle, top) each is checked at.
    middle : bool
        Whether any criterion is checked at the middle point.
    forms : int64 (nrows, ncrit), consts : float64 (nrows, ncrit, NCONST)
        Prepared forms and constants (:func:`shells.criteria.dispatch.prepare_table`).
    params : float64 (nrows, NPARAM)
        Property vectors (for the criteria without a prepared form on the row).
    bm, bf : float64 (maxply, 3, 6)
        Mechanical and fixed material-axis stresses per ply slot and point.
    r, crit, mode : float, int, int
        The lowest ratio so far, the index in ``codes`` of its criterion and its mode.
    sm, sf : float64 (6,)
        Work arrays.

    Returns
    -------
    r, crit, mode
        Replaced by a criterion's when strictly lower (points bottom to top, criteria in the order of ``codes``).
    """
    cr = consts[row]
    for pt in range(3):
        if pt == 1 and not middle:
            continue
        for a in range(6):
            sm[a] = bm[k, pt, a]
            sf[a] = bf[k, pt, a]
        for m in range(codes.shape[0]):
            if not masks[m, pt]:
                continue
            f = forms[row, m]
            if f == SKIP:             # the criterion does not apply: R = inf
                continue
            if f == FAST:
                sr, md = point_by_code(codes[m], sm, sf, cr, m)
            else:
                sr, md = generic_at(codes[m], bm, bf, k, pt, params, row)
            if sr < r:
                r, crit, mode = sr, m, md
    return r, crit, mode


@njit(cache=True)
def exact_step(codes, masks, middle, forms, consts, params, p0, n, bm, bf, lb, done, rk, ck, mk, lam, rmin):
    """Exact ratios of the plies of a step that can fail; returns the smallest ratio of the step.

    The plies not ``done`` are taken in increasing order of their lower bound ``lb`` (ties: the lower slot) and
    evaluated (:func:`ply_ratios`, from and into ``rk``, ``ck``, ``mk``; each is then ``done``) while the bound
    does not exceed the largest ratio that can still fail now: the current load factor ``lam``, or the smallest
    ratio so far (``rmin`` on entry: that of the plies checked in their fibres only). Slots ``p0 + k`` of the
    tables, ``k < n``; the other arguments as :func:`ply_ratios`.
    """
    sm = np.empty(6)
    sf = np.empty(6)
    while True:
        k = -1
        for kk in range(n):
            if not done[kk] and (k < 0 or lb[kk] < lb[k]):
                k = kk
        if k < 0 or lb[k] > max(lam, rmin) * (1.0 + TIE):
            return rmin
        done[k] = True
        rk[k], ck[k], mk[k] = ply_ratios(codes, masks, middle, forms, consts, params, p0 + k, bm, bf, k, rk[k], ck[k],
                                         mk[k], sm, sf)
        rmin = min(rmin, rk[k])
