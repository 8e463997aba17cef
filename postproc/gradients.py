"""In-plane gradients of the resultant field over a shell mesh, by least squares over edge neighbours.

For each cell c the resultants of c and of its edge neighbours in the same zone (cells sharing two corner nodes
with c) are rotated into c's laminate axes, and a linear function a + g·d is fitted to them, d being the
neighbour's centroid offset projected on c's laminate axes. The gradient g of N and M is what
:mod:`shells.field_shear` turns into transverse shear. A cell whose stencil cannot carry a plane (fewer than two
neighbours, or all on one line) has no gradient (``valid`` false): the caller falls back to the Q-only method
there. One-sided stencils (free edges, zone borders) still fit a plane exactly; the fit is first order there.

Arrays in, arrays out: corner connectivity, zones, centroids and frames come from the caller.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

#: Most neighbours kept per cell (more only at non-manifold edges).
MAX_NEIGHBOURS = 8


@dataclass(frozen=True)
class Stencil:
    """Least-squares gradient stencils of every cell (global cell ids).

    Attributes
    ----------
    neighbours : int64 (ncell, K)
        Edge neighbours in the same zone, −1 padded.
    weights : float64 (ncell, 2, K + 1)
        d/dx and d/dy (laminate axes of the cell) weights on [the cell, its neighbours...].
    angle : float64 (ncell, K + 1)
        Angle (radians, counter-clockwise about the cell's normal) from the cell's laminate x axis to the
        element x axis of each stencil member projected on the cell's plane.
    valid : bool (ncell,)
        A plane could be fitted.
    """

    neighbours: np.ndarray
    weights: np.ndarray
    angle: np.ndarray
    valid: np.ndarray

    def halo(self, cells: np.ndarray) -> np.ndarray:
        """Sorted ids of the cells and of all their neighbours."""
        nb = self.neighbours[cells]
        return np.unique(np.concatenate([np.asarray(cells).ravel(), nb[nb >= 0]]))


def edge_neighbours(corners: Sequence[np.ndarray], zone: np.ndarray) -> np.ndarray:
    """(ncell, K) edge neighbours in the same zone, −1 padded; ``corners``: corner connectivity per block."""
    zone = np.asarray(zone)
    n = int(zone.size)
    edges, owner = [], []
    start = 0
    for c in corners:
        c = np.asarray(c, dtype=np.int64)
        k = c.shape[1]
        for a in range(k):
            e = np.sort(np.stack([c[:, a], c[:, (a + 1) % k]], axis=1), axis=1)
            edges.append(e)
            owner.append(np.arange(start, start + len(c)))
        start += len(c)
    if not edges:
        return np.full((n, 0), -1, np.int64)
    e = np.concatenate(edges)
    o = np.concatenate(owner)
    _, key = np.unique(e, axis=0, return_inverse=True)
    key = key.ravel()
    order = np.argsort(key, kind="stable")
    key, o = key[order], o[order]
    bounds = np.flatnonzero(np.diff(key)) + 1
    pairs = []
    for group in np.split(o, bounds):
        if len(group) > 1:
            g = np.unique(group)
            a, b = np.meshgrid(g, g, indexing="ij")
            keep = a != b
            pairs.append(np.stack([a[keep], b[keep]], axis=1))
    out = np.full((n, MAX_NEIGHBOURS), -1, np.int64)
    if not pairs:
        return out[:, :0]
    p = np.unique(np.concatenate(pairs), axis=0)
    p = p[zone[p[:, 0]] == zone[p[:, 1]]]
    count = np.zeros(n, np.int64)
    for a, b in p:
        if count[a] < MAX_NEIGHBOURS:
            out[a, count[a]] = b
            count[a] += 1
    return out[:, :max(1, int(count.max()) if count.size else 1)]


#: A stencil whose offsets span the plane less than this (smallest over largest eigenvalue of their second
#: moment) is widened to the neighbours of its neighbours (e.g. a triangle at a zone border whose two
#: neighbours lie nearly in line with it).
SPREAD = 0.1


def _local_axes(frame_x: np.ndarray, frame_y: np.ndarray, phi_deg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    phi = np.radians(np.asarray(phi_deg, dtype=float))
    c, s = np.cos(phi)[:, None], np.sin(phi)[:, None]
    return c * frame_x + s * frame_y, -s * frame_x + c * frame_y          # laminate axes, global components


def _fit(nb: np.ndarray, cells: np.ndarray, centroids: np.ndarray, ex: np.ndarray, ey: np.ndarray):
    """Weights (n, 2, K + 1), validity and spread of the stencils ``nb`` (n, K) of ``cells``."""
    members = np.concatenate([cells[:, None], nb], axis=1)
    present = members >= 0
    m = np.where(present, members, cells[:, None])
    d = centroids[m] - centroids[cells][:, None, :]
    dx = np.einsum("nkj,nj->nk", d, ex[cells]) * present
    dy = np.einsum("nkj,nj->nk", d, ey[cells]) * present
    size = np.sqrt((dx ** 2 + dy ** 2).max(axis=1))
    size = np.where(size > 0, size, 1.0)
    X = np.stack([present.astype(float), dx / size[:, None], dy / size[:, None]], axis=-1)   # (n, K + 1, 3)
    XtX = np.einsum("nki,nkj->nij", X, X)
    moment = np.einsum("nki,nkj->nij", X[..., 1:], X[..., 1:])
    ev = np.linalg.eigvalsh(moment)
    spread = ev[:, 0] / np.maximum(ev[:, 1], 1e-300)
    valid = (present.sum(axis=1) >= 3) & (np.linalg.eigvalsh(XtX)[:, 0] > 1e-10)
    safe = np.where(valid[:, None, None], XtX, np.eye(3))
    weights = np.linalg.solve(safe, np.transpose(X, (0, 2, 1)))[:, 1:, :] / size[:, None, None]
    return np.where(valid[:, None, None], weights, 0.0), valid, spread


def _widened(nb: np.ndarray, cells: np.ndarray) -> np.ndarray:
    """Neighbours and neighbours' neighbours of ``cells`` (same zone, since ``nb`` is), −1 padded."""
    rows = []
    for c in cells:
        first = nb[c][nb[c] >= 0]
        second = nb[first].ravel()
        ring = np.setdiff1d(np.union1d(first, second[second >= 0]), [c])
        rows.append(ring)
    out = np.full((len(cells), max([len(r) for r in rows] + [1])), -1, np.int64)
    for i, r in enumerate(rows):
        out[i, :len(r)] = r
    return out


def build_stencil(neighbours: np.ndarray, centroids: np.ndarray, frame_x: np.ndarray, frame_y: np.ndarray,
                  phi_deg: np.ndarray) -> Stencil:
    """Least-squares weights and frame angles of every cell's stencil (see :class:`Stencil`).

    A stencil spreading too little across the plane (:data:`SPREAD`) is widened once to the second ring.
    """
    nb = np.asarray(neighbours, dtype=np.int64)
    n = nb.shape[0]
    ex, ey = _local_axes(frame_x, frame_y, phi_deg)
    cells = np.arange(n)
    weights, valid, spread = _fit(nb, cells, centroids, ex, ey)
    thin = np.flatnonzero(spread < SPREAD)
    if thin.size:
        wide = _widened(nb, thin)
        w2, v2, _ = _fit(wide, thin, centroids, ex, ey)
        K = max(nb.shape[1], wide.shape[1])
        nb = np.pad(nb, ((0, 0), (0, K - nb.shape[1])), constant_values=-1)
        weights = np.pad(weights, ((0, 0), (0, 0), (0, K + 1 - weights.shape[2])))
        nb[thin] = np.pad(wide, ((0, 0), (0, K - wide.shape[1])), constant_values=-1)
        weights[thin] = np.pad(w2, ((0, 0), (0, 0), (0, K + 1 - w2.shape[2])))
        valid = valid.copy()
        valid[thin] = v2
    members = np.concatenate([cells[:, None], nb], axis=1)
    xm = frame_x[np.where(members >= 0, members, cells[:, None])]
    angle = np.arctan2(np.einsum("nkj,nj->nk", xm, ey), np.einsum("nkj,nj->nk", xm, ex))
    return Stencil(nb, weights, angle, valid)


def _rotate(R: np.ndarray, theta: np.ndarray) -> np.ndarray:
    """Resultants (..., 8) given in axes at θ from the target axes → target axes (N, M as stresses, Q a vector)."""
    c, s = np.cos(theta), np.sin(theta)
    cc, ss, cs = c * c, s * s, c * s
    out = np.empty_like(R)
    for o in (0, 3):
        a, b, t = R[..., o], R[..., o + 1], R[..., o + 2]
        out[..., o] = cc * a + ss * b - 2 * cs * t
        out[..., o + 1] = ss * a + cc * b + 2 * cs * t
        out[..., o + 2] = cs * a - cs * b + (cc - ss) * t
    out[..., 6] = c * R[..., 6] - s * R[..., 7]
    out[..., 7] = s * R[..., 6] + c * R[..., 7]
    return out


def fit_gradients(stencil: Stencil, cells: np.ndarray, ids: np.ndarray, R: np.ndarray) -> tuple[np.ndarray, ...]:
    """Gradients of N and M at ``cells`` from resultants ``R`` of the cells ``ids`` (which hold the stencils).

    Parameters
    ----------
    stencil : Stencil
    cells : int (n,)
        Global ids of the cells to fit.
    ids : int (m,), sorted
        Global ids of the rows of ``R`` (the cells and their neighbours, :meth:`Stencil.halo`).
    R : float (..., m, 8)
        Resultants in each cell's element frame (any leading axes: steps or cases).

    Returns
    -------
    g : (..., n, 12)
        Gradients in each cell's laminate axes, order of :data:`shells.field_shear.GRADIENT_COMPONENTS`.
    q : (..., n, 2)
        The cell's own (Qx, Qy) rotated into its laminate axes.
    """
    cells = np.asarray(cells, dtype=np.int64)
    members = np.concatenate([cells[:, None], stencil.neighbours[cells]], axis=1)
    present = members >= 0
    rows = np.searchsorted(ids, np.where(present, members, cells[:, None]))
    Rm = np.asarray(R, dtype=float)[..., rows, :]                     # (..., n, K + 1, 8)
    Rl = _rotate(Rm, stencil.angle[cells])
    Rl = np.where(present[..., None], Rl, 0.0)
    w = stencil.weights[cells]                                          # (n, 2, K + 1)
    grad = np.einsum("ndk,...nkr->...ndr", w, Rl[..., :6])            # (..., n, 2, 6)
    g = np.concatenate([grad[..., 0, :], grad[..., 1, :]], axis=-1)
    return g, Rl[..., 0, 6:8]


def field_shear(G: np.ndarray, F: np.ndarray, first: np.ndarray, nply: np.ndarray, max_plies: int,
                cell_sec: np.ndarray, phi_deg: np.ndarray, g: np.ndarray, R: np.ndarray,
                valid: np.ndarray) -> np.ndarray:
    """(τxz, τyz) at every ply point, laminate axes: G·g where the cell has a gradient, F·Q elsewhere.

    Parameters
    ----------
    G : (nrows, 3, 2, 12)
        Gradient-to-shear matrices of every ply row (:func:`shells.field_shear.gradient_shear_matrix`).
    F : (nrows, 3, 2, 2)
        Q-only distributions (the fallback).
    first, nply : int (nsec,)
        Ply rows of each section.
    max_plies : int
    cell_sec : int (ncell,), phi_deg : float (ncell,)
    g : (ncase, ncell, 12)
        Gradients in laminate axes.
    R : (ncase, ncell, 8)
        Resultants in the element frame (for the fallback's Q).
    valid : bool (ncell,)

    Returns
    -------
    ndarray (ncase, ncell, max_plies, 3, 2), NaN past a cell's ply count.
    """
    ncase, ncell = g.shape[:2]
    out = np.full((ncase, ncell, max_plies, 3, 2), np.nan)
    phi = np.radians(np.asarray(phi_deg, dtype=float))
    c, s = np.cos(phi), np.sin(phi)
    q = np.stack([c * R[..., 6] + s * R[..., 7], -s * R[..., 6] + c * R[..., 7]], axis=-1)   # laminate axes
    for sec in np.unique(cell_sec):
        cells = np.flatnonzero(cell_sec == sec)
        rows = slice(first[sec], first[sec] + nply[sec])
        ok, fb = cells[valid[cells]], cells[~valid[cells]]
        out[:, ok, :nply[sec]] = np.einsum("kpij,snj->snkpi", G[rows], g[:, ok])
        out[:, fb, :nply[sec]] = np.einsum("kpij,snj->snkpi", F[rows], q[:, fb])
    return out
