"""Exact strength ratios of one ply point for the ply discount (:mod:`shells.progressive`), through the prepared
per-ply forms of the criteria (:mod:`shells.criteria.prepared`), as the recovery kernel evaluates them.

Kept apart from the parallel kernel, which calls it as an ordinary compiled function: the criteria are compiled
here once, not inlined into the kernel (a shorter cold compile).
"""

from __future__ import annotations

from numba import njit

from .criteria.dispatch import point_by_code, ratio_by_code
from .criteria.prepared import FAST, SKIP
from .numba_cache import configure

configure()


@njit(cache=True)
def point_ratios(codes, masks, pt, form, const, p, sm, sf, r, crit, mode):
    """The lowest ratio at point ``pt`` of a ply over the criteria ``codes``, starting from (r, crit, mode).

    Parameters
    ----------
    codes : int64 (ncrit,), masks : bool (ncrit, 3)
        Criteria and the points (bottom, middle, top) each is checked at.
    pt : int
        The point.
    form : int64 (ncrit,), const : float64 (ncrit, NCONST)
        The ply row's prepared forms and constants (:func:`shells.criteria.dispatch.prepare_table`).
    p : float64 (NPARAM,)
        The ply row's property vector (for criteria without a prepared form on it).
    sm, sf : float64 (6,)
        Mechanical and fixed material-axis stresses at the point.
    r, crit, mode : float, int, int
        The lowest ratio so far, the index in ``codes`` of its criterion and its mode.

    Returns
    -------
    r, crit, mode
        Replaced by a criterion's when strictly lower (criteria in the order of ``codes``).
    """
    for m in range(codes.shape[0]):
        if not masks[m, pt]:
            continue
        f = form[m]
        if f == SKIP:                 # the criterion does not apply: R = inf
            continue
        if f == FAST:
            sr, md = point_by_code(codes[m], sm, sf, const, m)
        else:
            sr, md = ratio_by_code(codes[m], sm, sf, p)
        if sr < r:
            r, crit, mode = sr, m, md
    return r, crit, mode
