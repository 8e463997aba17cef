"""Prepared forms: a criterion's per-ply constants computed once, then evaluated point by point without them.

A criterion's ``prepare(p, out) -> form`` looks at one ply's property vector
``p`` once per kernel call and returns its form: :data:`SKIP` (the criterion
does not apply: R = inf, mode −1 at every point, nothing to record),
:data:`FAST` (its constants, at most :data:`NCONST`, written to ``out``; the
kernel then calls ``point(sm, sf, c, m)`` with those constants in row ``m`` of
``c``) or :data:`GENERIC` (the point-by-point ``ratio`` on the property vector,
e.g. maximum stress on an isotropic layer). The constants are the strengths'
reciprocals and products the criterion would otherwise form on every call; a
criterion's ``ratio`` and ``point`` run the same arithmetic on the same
constants, so both give the same bits.

A criterion whose safe region is convex (or, as Hashin's with σ3 = 0, whose
mode functions are) may also give ``inside(sm, sf, c, m, lam) -> bool`` on the
same constants: True only when the states ``sf`` and ``sf + lam·sm`` both lie
inside the region (each mode below 1) by the margin :data:`INSIDE`, so that (by
convexity) the ratio exceeds ``lam``. The ply discount uses it to
leave out evaluations that cannot fail at a step; False means "cannot tell".
"""

from __future__ import annotations

from numba import njit

from .state import INF

#: Most constants a prepared form keeps per ply.
NCONST = 16
#: Forms returned by ``prepare``.
SKIP, FAST, GENERIC = 0, 1, 2


@njit(cache=True)
def generic_prepare(p, out):
    """``prepare`` of a criterion without a prepared form: every ply point by the criterion's ``ratio``."""
    return GENERIC


#: Relative margin of an ``inside`` test: each end of the segment must lie this far inside the safe region.
INSIDE = 1e-9


@njit(cache=True)
def no_inside(sm, sf, c, m, lam):
    """``inside`` of a criterion without one: cannot tell (False)."""
    return False


@njit(cache=True)
def no_point(sm, sf, c, m):
    """``point`` of a criterion without a prepared form (never called: its ``prepare`` answers GENERIC)."""
    return INF, -1
