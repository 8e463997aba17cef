"""Exact strength ratios of a ply for the ply discount (:mod:`shells.progressive`), through the prepared
per-ply forms of the criteria (:mod:`shells.criteria.prepared`), as the recovery kernel evaluates them.

Kept apart from the parallel kernel, which calls it as an ordinary compiled function: the criteria are not
typed again inside the kernel's parallel loop (a shorter cold compile). The prepared forms give the bits of the
criteria's own ``ratio`` (about 1.4× faster in the ply discount).
"""

from __future__ import annotations

from numba import njit

from .criteria.dispatch import ratio_by_form
from .criteria.prepared import SKIP
from .numba_cache import configure

configure()


@njit(cache=True)
def ply_ratios(codes, masks, middle, forms, consts, params, row, bm, bf, k, r, crit, mode):
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

    Returns
    -------
    r, crit, mode
        Replaced by a criterion's when strictly lower (points bottom to top, criteria in the order of ``codes``).
    """
    for pt in range(3):
        if pt == 1 and not middle:
            continue
        sm, sf = bm[k, pt], bf[k, pt]
        for m in range(codes.shape[0]):
            if not masks[m, pt]:
                continue
            f = forms[row, m]
            if f == SKIP:             # the criterion does not apply: R = inf
                continue
            sr, md = ratio_by_form(f, codes[m], sm, sf, consts[row], m, params[row])
            if sr < r:
                r, crit, mode = sr, m, md
    return r, crit, mode
