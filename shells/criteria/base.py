"""The failure-criterion base class, the block driver and shared numba helpers.

A point state is a float64 vector of six stresses in MATERIAL axes, order
``(σ1, σ2, τ12, τ13, τ23, σ3)`` (tension positive, force/length²). Every
evaluation gets two states: ``sm``, the mechanical part, which scales with the
load factor R, and ``sf``, the fixed part (thermal residual stress), which is
held. The strength ratio is the smallest R ≥ 0 with
``criterion(sf + R·sm) = 1`` (see ``docs/conventions.md``):

- no mechanical stress, or a load direction that never fails: ``sr = +inf``,
  ``mode = -1``;
- the fixed part alone already fails: ``sr = 0`` with its mode (this wins over
  the previous rule);
- criterion not applicable to the ply (its kind is not in ``requires``, or an
  optional allowable is NaN): ``sr = +inf``, ``mode = -1``.

The helpers below solve a linear or quadratic criterion in R exactly; the
bracketed search (:func:`search_next`) is for criteria with no closed form.
"""

from __future__ import annotations

import math
from types import MappingProxyType

import numpy as np
from numba import njit, prange

from .. import params as P
from ..errors import ResultantsError

S1, S2, T12, T13, T23, S3 = range(6)
NSTATE = 6
NPOINT = 3
INF = np.inf

#: Modes shared by the in-plane ply criteria (max stress, max strain, Tsai-Hill, Tsai-Wu, Hoffman).
PLY_MODES = ("fibre tension", "fibre compression", "matrix tension", "matrix compression", "in-plane shear")
FT, FC, MT, MC, SH = range(5)


class Criterion:
    """Declarative description of one failure criterion.

    Subclasses set the class attributes below and one staticmethod ``ratio``,
    a numba ``@njit(cache=True)`` function ``ratio(sm, sf, p) -> (sr, mode)``
    (float64, int64); ``p`` is the ply's property vector
    (:mod:`shells.params`). Nothing is instantiated.

    Attributes
    ----------
    name : str
        Registry key used in definition files.
    title : str
        Human-readable name with the source.
    modes : tuple of str
        Failure modes; ``ratio`` returns an index into it (-1: none).
    requires : mapping int -> tuple of str
        Material kind (``params.KIND_*``) -> property names the criterion
        needs. Kinds not listed are "not applicable". An entry ``"a|b"`` is
        satisfied when either property is defined.
    points : tuple of int
        Through-thickness points it applies at (0 bottom, 1 middle, 2 top).
    """

    name: str = ""
    title: str = ""
    modes: tuple = ()
    requires = MappingProxyType({})
    points: tuple = (0, 1, 2)
    ratio = None

    def __init_subclass__(cls, **kwargs):
        super().__init_subclass__(**kwargs)
        if not cls.name or not cls.modes or cls.ratio is None:
            raise TypeError(f"criterion class {cls.__name__} must set name, modes and ratio")
        if not set(cls.points) <= {0, 1, 2} or not cls.points:
            raise TypeError(f"criterion {cls.name!r}: points must be a non-empty subset of (0, 1, 2)")
        for kind, keys in cls.requires.items():
            if kind not in range(len(P.KIND_NAMES)):
                raise TypeError(f"criterion {cls.name!r}: unknown material kind {kind!r}")
            for entry in keys:
                for key in entry.split("|"):
                    if key not in P.INDEX:
                        raise TypeError(f"criterion {cls.name!r}: unknown property {key!r}")
        cls.requires = MappingProxyType({k: tuple(v) for k, v in cls.requires.items()})

    @classmethod
    def applies_to(cls, kind: float) -> bool:
        """True when the criterion applies to material kind ``kind``."""
        return int(kind) in cls.requires

    @classmethod
    def missing(cls, p: np.ndarray) -> str | None:
        """The first ``requires`` entry the property vector ``p`` does not define, or None."""
        kind = int(p[P.KIND])
        for entry in cls.requires.get(kind, ()):
            if all(np.isnan(p[P.INDEX[key]]) for key in entry.split("|")):
                return entry
        return None


def failure_index(sr):
    """Failure index 1/R of strength ratios ``sr`` (project-wide definition).

    ``sr = 0`` gives ``inf``, ``sr = inf`` gives 0 and NaN stays NaN. Works on
    scalars and arrays and never modifies its argument.
    """
    with np.errstate(divide="ignore"):
        return np.divide(1.0, np.asarray(sr, dtype=np.float64))


# --------------------------------------------------------------------------- numba helpers

@njit(cache=True, inline="always")
def has_fixed(sf):
    """True when any component of the fixed state is non-zero."""
    for i in range(NSTATE):
        if sf[i] != 0.0:
            return True
    return False


@njit(cache=True, inline="always")
def at(sm, sf, r, i):
    """Component ``i`` of the state ``sf + r·sm`` (no allocation)."""
    return sf[i] + r * sm[i]


@njit(cache=True, inline="always")
def linear_ratio(f, m, upper, lower):
    """Smallest R ≥ 0 at which ``f + R·m`` reaches ``upper`` or ``-lower``.

    0 when ``f`` already lies outside ``(-lower, upper)``; inf when ``m = 0``
    or the load moves toward an infinite limit.
    """
    if f >= upper or f <= -lower:
        return 0.0
    if m > 0.0:
        return (upper - f) / m
    if m < 0.0:
        return (f + lower) / (-m)
    return INF


@njit(cache=True, inline="always")
def quadratic_roots(a, b, c):
    """Real roots (r1 ≤ r2) of ``a R² + b R + c = 0``; missing roots are inf.

    Uses the cancellation-free form q = −(b + sign(b)·√disc)/2.
    """
    if a == 0.0:
        if b == 0.0:
            return INF, INF
        return -c / b, INF
    disc = b * b - 4.0 * a * c
    if disc < 0.0:
        return INF, INF
    q = -0.5 * (b + math.copysign(math.sqrt(disc), b))
    if q == 0.0:
        return 0.0, 0.0
    r1 = q / a
    r2 = c / q
    if r1 <= r2:
        return r1, r2
    return r2, r1


@njit(cache=True, inline="always")
def first_crossing(a, b, c, lo, hi):
    """First R in ``[lo, hi]`` with ``g(R) = a R² + b R + c ≥ 0``.

    ``g`` is the criterion value minus 1 along the load ray. Returns ``lo`` when
    ``g(lo) ≥ 0`` already and inf when ``g`` stays negative on the interval.
    """
    if (a * lo + b) * lo + c >= 0.0:
        return lo
    r1, r2 = quadratic_roots(a, b, c)
    if lo < r1 <= hi:
        return r1
    if lo < r2 <= hi:
        return r2
    return INF


@njit(cache=True, inline="always")
def product_coeffs(gi, mi, gj, mj):
    """Coefficients (of R², R, 1) of the product (gi + R·mi)(gj + R·mj)."""
    return mi * mj, gi * mj + gj * mi, gi * gj


@njit(cache=True, inline="always")
def break_point(f, m):
    """R > 0 at which ``f + R·m`` changes sign, inf if it never does."""
    if m == 0.0:
        return INF
    r = -f / m
    return r if r > 0.0 else INF


@njit(cache=True, inline="always")
def sign_between(f, m, lo, hi):
    """Sign (−1, 0, 1) of ``f + R·m`` inside the open interval (lo, hi)."""
    mid = 2.0 * lo + 1.0 if hi == INF else 0.5 * (lo + hi)
    v = f + mid * m
    return 1 if v > 0.0 else (-1 if v < 0.0 else 0)


# Bracketed root search by reverse communication: the criterion owns the loop and
# calls its own exposure function (a dispatcher passed as a value would defeat caching):
#
#     st = search_start(homogeneous and not has_fixed(sf))
#     f, m = exposure(sm, sf, 0.0, p)
#     while not search_done(st):
#         st = search_next(st, f)
#         f, m = exposure(sm, sf, search_point(st), p)
#     return search_result(st, m)
#
# The state is (phase, lo, hi, k, r): r is the load factor to evaluate next.
_START, _HOMOG, _FIRST, _DOWN, _UP, _SCAN, _BISECT, _DONE = range(8)
_NSCAN = 16


@njit(cache=True)
def search_start(homogeneous):
    """Initial state of the bracketed search (first point R = 0).

    ``homogeneous``: the exposure is of degree 1 in stress along this ray with
    no fixed part, so R = 1/f(R=1) exactly and no search is made.
    """
    return (float(_START), 0.0, 0.0, 1.0 if homogeneous else 0.0, 0.0)


@njit(cache=True)
def search_done(st):
    return st[0] == _DONE


@njit(cache=True)
def search_point(st):
    """The load factor to evaluate next (0 in place of a non-finite final answer)."""
    r = st[4]
    return r if math.isfinite(r) else 0.0


@njit(cache=True)
def search_result(st, mode):
    """(R, mode) of a finished search; mode -1 when R is inf or NaN."""
    r = st[4]
    return (r, mode) if math.isfinite(r) else (r, -1)


@njit(cache=True)
def _scan_or_bisect(lo, hi):
    if hi - lo <= 1e-15 * hi:
        return (float(_DONE), lo, hi, 0.0, hi)
    return (float(_BISECT), lo, hi, 0.0, 0.5 * (lo + hi))


@njit(cache=True)
def search_next(st, f):
    """Advance the search given the exposure ``f`` (failure at f ≥ 1) at the state's point.

    Strategy: R = 0 failing gives 0; the homogeneous case gives 1/f(1);
    otherwise the failing side is bracketed by halving or doubling from R = 1,
    [0, hi] is scanned in 16 steps for the first point that fails and that
    bracket is bisected to a relative width of 1e-15 (the failing end is
    returned). A crossing narrower than a scan step can be missed; a convex
    exposure crosses once. NaN exposures give R = NaN.
    """
    phase, lo, hi, k, r = st
    if f != f:
        return (float(_DONE), 0.0, 0.0, 0.0, np.nan)
    if phase == _START:
        if f >= 1.0:
            return (float(_DONE), 0.0, 0.0, 0.0, 0.0)
        if k == 1.0:
            return (float(_HOMOG), 0.0, 0.0, 0.0, 1.0)
        return (float(_FIRST), 0.0, 1.0, 0.0, 1.0)
    if phase == _HOMOG:
        return (float(_DONE), 0.0, 0.0, 0.0, INF if f <= 0.0 else 1.0 / f)
    if phase == _FIRST:
        if f >= 1.0:
            return (float(_DOWN), 0.0, 1.0, 0.0, 0.5)
        return (float(_UP), 0.0, 2.0, 0.0, 2.0)
    if phase == _DOWN:
        if f >= 1.0 and k < 1100.0:
            return (float(_DOWN), 0.0, r, k + 1.0, 0.5 * r)
        return (float(_SCAN), 0.0, hi, 1.0, hi / _NSCAN)
    if phase == _UP:
        if f >= 1.0:
            return (float(_SCAN), 0.0, r, 1.0, r / _NSCAN)
        if r > 1e300:
            return (float(_DONE), 0.0, 0.0, 0.0, INF)
        return (float(_UP), 0.0, 2.0 * r, 0.0, 2.0 * r)
    if phase == _SCAN:
        if f >= 1.0 or k >= _NSCAN:
            return _scan_or_bisect(lo, r)
        return (float(_SCAN), r, hi, k + 1.0, hi if k + 1.0 >= _NSCAN else hi * (k + 1.0) / _NSCAN)
    # bisection
    if f >= 1.0:
        return _scan_or_bisect(lo, r)
    return _scan_or_bisect(r, hi)


# --------------------------------------------------------------------------- block driver

@njit(parallel=True)
def evaluate_block(ratio_fn, point_mask, sm, sf, pidx, params, out_sr, out_mode):
    """Strength ratios of one criterion over a block of cells × cases × plies × points.

    Not cached: numba's cache cannot hold specialisations on a function argument
    (they recompile in every process and saving them fails intermittently). The
    cached driver by registry code is :func:`shells.criteria.dispatch.evaluate_block_by_code`.

    Parameters
    ----------
    ratio_fn : numba dispatcher
        A criterion's ``ratio``.
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
                for q in range(NPOINT):
                    if row < 0:
                        out_sr[c, j, k, q] = np.nan
                        out_mode[c, j, k, q] = -1
                    elif not point_mask[q]:
                        out_sr[c, j, k, q] = INF
                        out_mode[c, j, k, q] = -1
                    else:
                        r, m = ratio_fn(sm[c, j, k, q], sf[c, j, k, q], params[row])
                        out_sr[c, j, k, q] = r
                        out_mode[c, j, k, q] = m


def evaluate(criterion, sm, sf, pidx, params, block=None):
    """Allocate the outputs and run :func:`evaluate_block` (or ``block``) for ``criterion``.

    Parameters
    ----------
    criterion : Criterion subclass
        Its ``points`` select the through-thickness points.
    sm, sf, pidx, params : array_like
        As in :func:`evaluate_block`; copied only when not already contiguous
        of the right dtype (never modified).
    block : callable, optional
        ``block(mask, sm, sf, pidx, params, out_sr, out_mode)`` to run instead of
        ``evaluate_block`` with ``criterion.ratio``.

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
    if block is None:
        evaluate_block(criterion.ratio, mask, sm, sf, pidx, params, out_sr, out_mode)
    else:
        block(mask, sm, sf, pidx, params, out_sr, out_mode)
    return out_sr, out_mode
