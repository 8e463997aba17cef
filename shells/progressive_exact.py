"""Exact strength ratios of the plies that can fail at a step of the ply discount (:mod:`shells.progressive`),
through the prepared per-ply forms of the criteria (:mod:`shells.criteria.prepared`), as the recovery kernel
evaluates them.

At each step :func:`exact_step` evaluates the ply of the lowest bound, then every other ply whose lower bound
does not rule out a failure at this step (one pass in slot order). It is inlined into the parallel kernel: as a
call per step with its twenty arrays it cost about 13 % of the kernel's time (measured against the inlined
form; the same function compiled once per cell outside the parallel loop was as slow as the call), at the price
of about 20 s more cold compile for a progressive run (the criteria are typed inside the kernel's loop). The
states copied into work arrays, and a criterion without a prepared form on the row called out of line on the
parent arrays, keep call and reference-counting work off the evaluations.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from . import params as P
from .criteria.dispatch import inside_by_code, point_by_code, ratio_by_code
from .criteria.max_stress import limits_inside
from .criteria.prepared import FAST, SKIP
from .numba_cache import configure

configure()

#: Ratios within this relative distance of the smallest fail in the same step (plies of a symmetric stack).
TIE = 1e-9
#: A bound from the box κ·B is taken this much (relative) below its value: covers the rounding of the gauge and of
#: κ against a criterion's own ratio.
BOUND = 1e-12


@njit(cache=True)
def generic_at(code, bm, bf, k, pt, params, row):
    """``ratio_by_code`` on the states of ply slot ``k`` at point ``pt`` (the views are made here, out of line)."""
    return ratio_by_code(code, bm[k, pt], bf[k, pt], params[row])


@njit(cache=True, inline="always")
def _face_in_box(bm, bf, k, pt, p, kap, lam):
    """The maximum-stress limits test (:func:`shells.criteria.max_stress.limits_inside`) on the box κ·B."""
    return limits_inside(bm[k, pt, 0], bf[k, pt, 0], bm[k, pt, 1], bf[k, pt, 1], bm[k, pt, 2], bf[k, pt, 2],
                         kap * p[P.XT], kap * p[P.XC], kap * p[P.YT], kap * p[P.YC], kap * p[P.S12], lam)


@njit(cache=True, inline="always")
def box_inside(bm, bf, k, pt, p, kap, lam):
    """Whether the in-plane states of slot ``k`` at point ``pt`` stay in the box κ·B up to the load factor
    ``lam`` (both ends of the segment inside it: a box is convex); at the middle point, both faces' (the
    middle's states are their mean). With κ·B inside a criterion's safe region, its ratio then exceeds ``lam``."""
    if pt == 1:
        return _face_in_box(bm, bf, k, 0, p, kap, lam) and _face_in_box(bm, bf, k, 2, p, kap, lam)
    return _face_in_box(bm, bf, k, pt, p, kap, lam)


@njit(cache=True, inline="always")
def ruled_out(lam, g, gb, box, ball):
    """Whether a criterion whose box κ is ``box`` and ball κ ``ball`` cannot fail a ply up to the load factor
    ``lam``: λ·gauge below κ (1 − BOUND) for either (gauges ``g``, ``gb``: ``fg`` of :func:`ply_ratios`)."""
    return lam * g < box * (1.0 - BOUND) or lam * gb < ball * (1.0 - BOUND)


@njit(cache=True, inline="always")
def ply_ratios(codes, masks, middle, forms, consts, params, boxes, balls, row, bm, bf, fg, k, limit, r, crit, mode, sm,
               sf):
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
    boxes, balls : float64 (nrows, ncrit)
        κ of the box and of the ball of each criterion on each row (:func:`shells.progressive_bounds.criterion_boxes`,
        :func:`~shells.progressive_bounds.criterion_balls`; 0: none).
    bm, bf : float64 (maxply, 3, 6)
        Mechanical and fixed material-axis stresses per ply slot and point.
    fg : float64 (maxply, 3, 2)
        Gauges of the ply's mechanical stresses at each point in the strength box B and in the ball of normalised
        stresses (:func:`shells.progressive_bounds.gauges`: at the middle the larger of the faces'; the fixed stresses
        being zero, inf when they are not): criterion ``m`` cannot fail at point ``pt`` while λ·gauge < κ_m of
        the box or of the ball (:func:`ruled_out`), nor at any point while the middle's gauges say so. Criteria
        so ruled out up to the smaller of ``limit`` and ``r`` are not looked at; the others are tested again at
        each point as ``r`` falls.
    limit : float
        The largest ratio that can fail at this step (inf: no limit). A criterion is not evaluated at a point
        where it is known not to fail up to the smaller of ``limit`` and the lowest ratio so far (× (1 + TIE)):
        by its ``inside`` test, or by staying in its box κ·B. The ratio returned is then exact when it does not
        exceed ``limit``, and above ``limit`` otherwise.
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
    pr = params[row]
    lam0 = min(limit, r * (1.0 + TIE))
    active = 0                        # criteria whose box the ply's faces may leave up to lam0 (bits)
    for m in range(codes.shape[0]):
        if forms[row, m] != SKIP and not ruled_out(lam0, fg[k, 1, 0], fg[k, 1, 1], boxes[row, m], balls[row, m]):
            active |= 1 << m
    if active == 0:
        return r, crit, mode
    for pt in range(3):
        if pt == 1 and not middle:
            continue
        for a in range(6):
            sm[a] = bm[k, pt, a]
            sf[a] = bf[k, pt, a]
        for m in range(codes.shape[0]):
            if not (active >> m) & 1 or not masks[m, pt]:
                continue
            f = forms[row, m]
            lam = min(limit, r * (1.0 + TIE))
            if ruled_out(lam, fg[k, pt, 0], fg[k, pt, 1], boxes[row, m], balls[row, m]):
                continue              # the point's states stay in the criterion's box or ball: it cannot fail
            if lam < np.inf and ((f == FAST and inside_by_code(codes[m], sm, sf, cr, m, lam))
                                 or (boxes[row, m] > 0.0 and box_inside(bm, bf, k, pt, pr, boxes[row, m], lam))):
                continue              # cannot fail up to lam: neither at this step nor below r
            if f == FAST:
                sr, md = point_by_code(codes[m], sm, sf, cr, m)
            else:
                sr, md = generic_at(codes[m], bm, bf, k, pt, params, row)
            if sr < r:
                r, crit, mode = sr, m, md
    return r, crit, mode


@njit(cache=True, inline="always")
def exact_step(codes, masks, middle, forms, consts, params, boxes, balls, p0, n, bm, bf, lb, fg, done, rk, ck, mk, lam,
               rmin, k, sm, sf):
    """Exact ratios of the plies of a step that can fail; returns the smallest ratio of the step.

    Slot ``k``, the first of the lowest bound ``lb`` among the slots not ``done`` (−1: none; the stress pass
    finds it), is evaluated first (:func:`ply_ratios`, from and into ``rk``, ``ck``, ``mk``; each evaluated slot
    is then ``done``), then every other one in slot order whose bound does not exceed the largest ratio that can
    still fail now: the current load factor ``lam``, or the smallest ratio so far (``rmin`` on entry: that of the
    plies checked in their fibres only), which falls as plies are evaluated. Every ply whose ratio is within that
    limit at the end is evaluated, and exactly (its bound is below its ratio, so within every earlier limit); a
    ply evaluated under a larger limit whose ratio exceeds the final one may keep a value only known to exceed its
    own limit, which does not fail it. The order changes which plies are evaluated, not the step's result. Slots
    ``p0 + j`` of the tables, ``j < n``; ``fg``: the slots' gauges (:func:`ply_ratios`);
    ``sm``, ``sf``: work arrays (6,); the other arguments as :func:`ply_ratios`.
    """
    if k < 0 or lb[k] > max(lam, rmin) * (1.0 + TIE):
        return rmin
    for kk in range(-1, n):           # then the others in slot order, each while its bound is within the limit
        j = k if kk < 0 else kk
        if done[j]:
            continue
        limit = max(lam, rmin) * (1.0 + TIE)
        if lb[j] > limit:
            continue
        done[j] = True
        rk[j], ck[j], mk[j] = ply_ratios(codes, masks, middle, forms, consts, params, boxes, balls, p0 + j, bm, bf,
                                         fg, j, limit, rk[j], ck[j], mk[j], sm, sf)
        rmin = min(rmin, rk[j])
    return rmin
