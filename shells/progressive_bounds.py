"""Boxes of in-plane stress inside every chosen criterion's safe region: a cheap lower bound on a ply's ratio.

For a ply row with strengths Xt, Xc, Yt, Yc, S12, let B be the box −Xc ≤ σ1 ≤ Xt, −Yc ≤ σ2 ≤ Yt, |τ12| ≤ S12. If
κ·B lies inside the safe region of a criterion, a state sf + λ·sm cannot fail that criterion before it leaves κ·B,
so the ratio of leaving κ·B (three linear ratios) is a lower bound on the criterion's ratio. The ply discount
(:mod:`shells.progressive`) uses it to evaluate the criteria exactly only on the plies that can fail next.

κ per criterion, with τ13 = τ23 = σ3 = 0 (the in-plane states of the discount):

- maximum stress: 1 (B is its safe region);
- maximum strain: the largest κ keeping the strains of the eight corners of κ·B within the strain limits (the
  strains are linear in the stresses and the region is convex, so the corners decide);
- Tsai-Wu: the largest κ keeping every corner of κ·B inside the ellipsoid (convex for |F12*| ≤ 1): the positive
  root of κ²·q(corner) + κ·l(corner) = 1;
- Hashin: fibre tension and matrix tension reach 2κ² = 1 at the corner (σ = κ·strength, τ12 = κ·S12), fibre
  compression κ = 1, matrix compression the root of (Yc²/(4 S_T²) + 1)·κ² − ((Yc/(2 S_T))² − 1)·κ = 1 (its
  function of σ2 is convex, so the ends of [−κ·Yc, 0] decide);
- a criterion that does not apply to the row's material kind: no limit (inf);
- any other criterion, or a layer that is not a ply: 0 (no bound; the criteria are always evaluated).

The row's κ is the smallest over the criteria; inf means no chosen criterion applies (the ply never fails). Each
criterion's own κ (:func:`criterion_boxes`) also leaves it out of a ply's evaluation where the ply's states stay in
its box up to the step's limit (:func:`shells.progressive_exact.ply_ratios`).

A second bound uses the ball of the normalised stresses (u, v, w) = (σ1/X, σ2/Y, τ12/S12), X = Xt or Xc and Y = Yt
or Yc by the sign of σ: its gauge sqrt(u² + v² + w²) is convex and positively homogeneous (each term a convex
function of one stress), so a state λ·sm stays in the ball of radius κ while λ·gauge < κ, and along a ply the
middle cannot leave it before both faces. The quadratic criteria are much closer to that ball than to the box
(κ of the graphite/epoxy of the benchmark: Tsai-Wu 0.48 for the box, 0.81 for the ball). κ of the ball per
criterion (:func:`criterion_balls`) comes from the criterion's own ratios, with no fixed stresses, at the vertices
of a polytope around the unit ball: in each octant of (u, v, w) the triangulated octant of the sphere, pushed out
so that every flat triangle lies outside the sphere. The criterion's safe region within an octant is convex (each
mode's function of the stresses is), so the polytope scaled by the smallest ratio at its vertices is inside it,
and with it the ball. Vertices on the planes between octants are also taken a little inside each octant (a
criterion's modes change there); κ is taken :data:`BALL_MARGIN` below the smallest ratio.

The kernel's side: :func:`gauges` of a ply's states in the box and in the ball (numba).
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np
from numba import njit

from . import params as P
from .criteria.dispatch import ratio_by_code
from .criteria.registry import code
from .numba_cache import configure

configure()

_CORNERS = ((1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0))


def _root(q: float, l: float) -> float:
    """Largest κ ≥ 0 with q·κ² + l·κ ≤ 1 for all smaller κ (q ≥ 0): the positive root, inf when none."""
    if q <= 0.0:
        return math.inf if l <= 0.0 else 1.0 / l
    return (-l + math.sqrt(l * l + 4.0 * q)) / (2.0 * q)


def _corners(p: np.ndarray):
    for s1, s2 in _CORNERS:
        yield (p[P.XT] if s1 > 0 else -p[P.XC]), (p[P.YT] if s2 > 0 else -p[P.YC]), p[P.S12]


def _max_strain(p: np.ndarray) -> float:
    e1, e2, g12, nu = p[P.E1], p[P.E2], p[P.G12], p[P.NU12]
    out = p[P.STRAIN_SH] / (p[P.S12] / g12)
    for s1, s2, _ in _corners(p):
        eps1 = (s1 - nu * s2) / e1
        eps2 = s2 / e2 - nu * s1 / e1
        for eps, up, lo in ((eps1, P.STRAIN_FT, P.STRAIN_FC), (eps2, P.STRAIN_MT, P.STRAIN_MC)):
            if eps != 0.0:
                out = min(out, (p[up] if eps > 0 else p[lo]) / abs(eps))
    return out


def _tsai_wu(p: np.ndarray) -> float:
    xt, xc, yt, yc, s = p[P.XT], p[P.XC], p[P.YT], p[P.YC], p[P.S12]
    f1, f2, f11, f22, f66 = 1 / xt - 1 / xc, 1 / yt - 1 / yc, 1 / (xt * xc), 1 / (yt * yc), 1 / (s * s)
    f12 = p[P.F12STAR] * math.sqrt(f11 * f22)
    out = math.inf
    for s1, s2, t in _corners(p):
        out = min(out, _root(f11 * s1 * s1 + f22 * s2 * s2 + f66 * t * t + 2 * f12 * s1 * s2, f1 * s1 + f2 * s2))
    return out


def _hashin(p: np.ndarray) -> float:
    yc, st = p[P.YC], p[P.S_T]
    compression = _root(yc * yc / (4 * st * st) + 1.0, -((yc / (2 * st)) ** 2 - 1.0))
    return min(1.0 / math.sqrt(2.0), 1.0, compression)


#: Criterion name → κ of a ply row (the criteria listed here apply to plies only, or to plies and isotropic
#: layers where noted in :func:`criterion_boxes`).
_PLY = {"max-stress": lambda p: 1.0, "max-strain": _max_strain, "tsai-wu": _tsai_wu, "hashin": _hashin}


#: Subdivisions of each edge of an octant of the sphere (the vertices of the polytope around the ball).
BALL_DIVISIONS = 24
#: κ of the ball is taken this much (relative) below the smallest ratio at the polytope's vertices.
BALL_MARGIN = 1e-6
#: How far (relative) a vertex on a plane between octants is also taken inside each of its octants.
NUDGE = 1e-9


def _table(params: np.ndarray, criteria: Sequence[type], kappa) -> np.ndarray:
    """κ (nrows, ncrit) from ``kappa(row, criterion)`` on the ply rows of the criteria in :data:`_PLY`: inf where
    the criterion does not apply to the row, 0 where it has no bound (or ``kappa`` gives none)."""
    out = np.full((params.shape[0], len(criteria)), np.inf)
    for k, p in enumerate(params):
        kind = int(p[P.KIND])
        for m, c in enumerate(criteria):
            if kind not in c.requires:
                continue                                   # not applicable: never fails by it
            if kind != P.KIND_PLY or c.name not in _PLY or np.isnan(p[[P.XT, P.XC, P.YT, P.YC, P.S12]]).any():
                out[k, m] = 0.0
                continue
            with np.errstate(all="ignore"):
                value = float(kappa(k, c))
            out[k, m] = value if math.isfinite(value) or value == math.inf else 0.0
    return np.where(np.isnan(out), 0.0, out)


def criterion_boxes(params: np.ndarray, criteria: Sequence[type]) -> np.ndarray:
    """κ (nrows, ncrit) of the strength box B of every row of ``params`` (nrows, NPARAM) for each chosen
    criterion class: inf where the criterion does not apply to the row, 0 where it has no bound (see the module
    notes)."""
    return _table(params, criteria, lambda k, c: _PLY[c.name](params[k]))


def ball_vertices(divisions: int = BALL_DIVISIONS) -> np.ndarray:
    """Vertices (nv, 3) in (u, v, w) of a polytope that contains the unit ball, octant by octant.

    Each octant of the sphere is the face of the octahedron cut into ``divisions``² triangles, their corners
    put on the sphere; all vertices are then scaled by 1/d, d the smallest distance of a triangle's plane from
    the origin, so that every triangle lies outside the sphere. Vertices on the planes between octants are
    given once per octant, also moved :data:`NUDGE` into it.
    """
    n = divisions
    ij = [(i, j) for i in range(n + 1) for j in range(n + 1 - i)]
    index = {t: a for a, t in enumerate(ij)}
    bary = np.array([(i, j, n - i - j) for i, j in ij], dtype=float)
    unit = bary / np.linalg.norm(bary, axis=1)[:, None]
    tris = [(index[i, j], index[i + 1, j], index[i, j + 1]) for i in range(n) for j in range(n - i)]
    tris += [(index[i + 1, j], index[i + 1, j + 1], index[i, j + 1]) for i in range(n) for j in range(n - i - 1)]
    a, b, c = (unit[[t[q] for t in tris]] for q in range(3))
    normal = np.cross(b - a, c - a)
    dist = np.abs(np.einsum("ij,ij->i", normal, a)) / np.linalg.norm(normal, axis=1)
    outer = unit / dist.min()
    out = []
    for signs in np.array(np.meshgrid([1.0, -1.0], [1.0, -1.0], [1.0, -1.0])).reshape(3, -1).T:
        v = outer * signs
        out.append(v)
        out.append(v + NUDGE * np.abs(v).max(axis=1)[:, None] * signs * (v == 0.0))
    return np.unique(np.concatenate(out), axis=0)


@njit(cache=True)
def smallest_ratio(code, sm, p):
    """The smallest ratio of criterion ``code`` over the mechanical states ``sm`` (nv, 6) with no fixed stresses,
    on the property vector ``p``."""
    zero = np.zeros(6)
    out = np.inf
    for i in range(sm.shape[0]):
        out = min(out, ratio_by_code(code, sm[i], zero, p)[0])
    return out


def criterion_balls(params: np.ndarray, criteria: Sequence[type]) -> np.ndarray:
    """κ (nrows, ncrit) of the ball of normalised stresses of every row of ``params`` (nrows, NPARAM) for each
    chosen criterion class (module notes): the smallest ratio, with no fixed stresses, at the vertices of
    :func:`ball_vertices` turned into stresses by the row's strengths, :data:`BALL_MARGIN` below. inf where the
    criterion does not apply to the row, 0 where it has no bound."""
    vert = ball_vertices()
    cache: dict[tuple, float] = {}

    def kappa(k: int, c: type) -> float:
        p = params[k]
        key = (c.name, p.tobytes())
        if key not in cache:
            sm = np.zeros((vert.shape[0], 6))
            for a, (up, down) in enumerate(((P.XT, P.XC), (P.YT, P.YC), (P.S12, P.S12))):
                sm[:, a] = vert[:, a] * np.where(vert[:, a] > 0.0, p[up], p[down])
            cache[key] = smallest_ratio(code(c.name), sm, np.ascontiguousarray(p)) * (1.0 - BALL_MARGIN)
        return cache[key]

    return _table(params, criteria, kappa)


@njit(cache=True, inline="always")
def gauges(bm, k, inv, row, out):
    """The gauges of the states of ply slot ``k`` in the box B and in the ball of normalised stresses
    (:mod:`shells.progressive_bounds`), from the reciprocal limits ``inv[row]`` (1/Xt, 1/Xc, 1/Yt, 1/Yc, 1/S12):
    with u, v, w the stresses over their limits, max(|u|, |v|, |w|) and sqrt(u² + v² + w²) into ``out[k, pt]``
    at each face (pt 0 and 2, from ``bm[k, pt]``) and the larger of the faces' at the middle (pt 1: a gauge is
    convex, and the middle's states are the faces' mean). The states λ·bm[k, pt] stay in κ·B (in the ball of
    radius κ) while λ·gauge < κ."""
    for pt in (0, 2):
        x0, x1, x2 = bm[k, pt, 0], bm[k, pt, 1], bm[k, pt, 2]
        u = x0 * (inv[row, 0] if x0 > 0.0 else -inv[row, 1])
        v = x1 * (inv[row, 2] if x1 > 0.0 else -inv[row, 3])
        w = abs(x2) * inv[row, 4]
        out[k, pt, 0] = max(u, v, w)
        out[k, pt, 1] = np.sqrt(u * u + v * v + w * w)
    out[k, 1, 0] = max(out[k, 0, 0], out[k, 2, 0])
    out[k, 1, 1] = max(out[k, 0, 1], out[k, 2, 1])


@njit(cache=True, inline="always")
def no_gauges(out, k):
    """Gauges of ply slot ``k`` that rule nothing out (inf: the ply has fixed stresses, or no box)."""
    for pt in range(3):
        out[k, pt, 0] = out[k, pt, 1] = np.inf
