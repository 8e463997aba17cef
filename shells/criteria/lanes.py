"""Lane forms: a criterion evaluated at one ply point of many cells at once, in structure-of-arrays form.

The recovery kernel (:mod:`shells.recovery`) takes up to :data:`LANES` cells of
one section at a time. For each case, ply and point it writes the states of
those cells into rows of one work array ``w`` (float64, row ``r`` at
``w[r * LANES : (r + 1) * LANES]``, lane ``l`` = cell): mechanical
(σ1, σ2, τ12, τ13, τ23, σ3) at offsets :data:`OM`, fixed at :data:`OF`. A
criterion's lane form ``lanes(w, nl, c)`` reads them, with the ply's constants
``c``, and writes the strength ratio of lane ``l`` at ``w[LR + l]`` and its mode
(as a float) at ``w[LD + l]``, for ``l < nl``.

Every row lies at an offset known when compiling, and a lane form touches no
other array than ``w`` in its loop: the compiler then proves the lanes
independent and vectorises the loop (the criteria are written without
branches, :mod:`shells.criteria.roots`).

A criterion's ``prepare(p, out) -> form`` looks at one ply's property vector
``p`` once per block and returns its form: :data:`SKIP` (not applicable: R = inf,
mode −1 at every lane, nothing to record), :data:`FAST` (the lane form, with
its constants written to ``out``, at most :data:`NCONST` of them) or
:data:`GENERIC` (the point-by-point ``ratio``, e.g. maximum stress on an
isotropic layer). The per-point ``ratio`` of a criterion with a lane form runs
the same arithmetic, so both give the same bits.
"""

from __future__ import annotations

from numba import njit

#: Cells evaluated together (lanes of the work array's rows).
LANES = 64
#: Rows read and written by the lane forms: mechanical state, fixed state, ratio, mode.
SM, SF, RATIO, MODE = 0, 6, 12, 13
#: First row free for the kernel's own use.
NROWS_CRITERIA = 14
#: Offsets in ``w`` of the mechanical and fixed rows (σ1, σ2, τ12, τ13, τ23, σ3), the ratio and the mode.
OM = tuple((SM + a) * LANES for a in range(6))
OF = tuple((SF + a) * LANES for a in range(6))
LR, LD = RATIO * LANES, MODE * LANES
#: Most constants a lane form keeps per ply.
NCONST = 16
#: Forms returned by ``prepare``.
SKIP, FAST, GENERIC = 0, 1, 2


@njit(cache=True)
def generic_prepare(p, out):
    """``prepare`` of a criterion without a lane form: every ply point by the criterion's ``ratio``."""
    return GENERIC


@njit(cache=True)
def no_lanes(w, nl, c):
    """``lanes`` of a criterion without a lane form (never called: its ``prepare`` answers GENERIC)."""
    return None


@njit(cache=True)
def lane_unloaded(w, l):
    """True when every component of lane ``l``'s fixed state is zero (no held part)."""
    for a in range(6):
        if w[OF[a] + l] != 0.0:
            return False
    return True
