"""The stiffness of a section whose failed plies keep part of their moduli, and a solve that finds the load the
degraded section can no longer carry (numba; used by the ply discount, :mod:`shells.progressive`).

Conventions: docs/conventions.md (Q̄ = T Q Tᵀ, laminate axes, engineering shear, ply z from the tables).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from . import params as P
from .numba_cache import configure

configure()

#: Pivot below this (on the unit-diagonal scaled stiffness) marks a direction the section no longer resists.
PIVOT = 1e-10
#: A load component left in a resisted-nowhere direction beyond this fraction of the load cannot be carried.
INCONSISTENT = 1e-8


@njit(cache=True, inline="always")
def solve_scaled(K, b, x, A, y, s, col):
    """Solve the symmetric positive semi-definite K (6, 6) for the columns of b (6, m) into x (6, m).

    Diagonal scaling to a unit diagonal (zero rows and columns left out), then Gaussian elimination with
    complete pivoting; pivots below :data:`PIVOT` end the elimination and their unknowns are 0. Returns False
    when a right-hand side has a component beyond :data:`INCONSISTENT` in the directions left out (the load
    cannot be carried), else True. ``A`` (6, 6), ``y`` (6, m), ``s`` (6,), ``col`` int (6,): work arrays. The
    pivot, the first largest |A[i, j]| in row order, is found by a maximum without branches and then its place:
    the solve takes two thirds of the time of one scan that compares and branches at every entry (measured).
    """
    n = 6
    m = b.shape[1]
    big0 = 0.0
    big1 = 0.0
    for i in range(3):
        big0 = max(big0, K[i, i])
        big1 = max(big1, K[i + 3, i + 3])
    for i in range(n):
        bb = big0 if i < 3 else big1
        s[i] = 1.0 / np.sqrt(K[i, i]) if K[i, i] > 1e-14 * bb and K[i, i] > 0.0 else 0.0
    norm0 = 0.0
    norm1 = 0.0
    for i in range(n):
        for j in range(n):
            A[i, j] = s[i] * K[i, j] * s[j]
        # A row the section does not resist at all is scaled as its block's stiffest row would be.
        bb = big0 if i < 3 else big1
        si = s[i] if s[i] > 0.0 else (1.0 / np.sqrt(bb) if bb > 0.0 else 1.0)
        for c in range(m):
            y[i, c] = si * b[i, c]
        norm0 = max(norm0, abs(y[i, 0]))
        norm1 = max(norm1, abs(y[i, m - 1]))
        col[i] = i
    rank = n
    for k in range(n):
        best = 0.0                    # the largest |A[i, j]| left (no branch: the compiler keeps it in registers)
        for i in range(k, n):
            for j in range(k, n):
                v = abs(A[i, j])
                best = v if v > best else best
        if best <= PIVOT:
            rank = k
            break
        p, q = k, k                   # its first place in row order: the pivot a scan with ">" would take
        found = False
        for i in range(k, n):
            for j in range(k, n):
                if abs(A[i, j]) == best:
                    p, q = i, j
                    found = True
                    break
            if found:
                break
        for j in range(n):
            A[k, j], A[p, j] = A[p, j], A[k, j]
        for c in range(m):
            y[k, c], y[p, c] = y[p, c], y[k, c]
        for i in range(n):
            A[i, k], A[i, q] = A[i, q], A[i, k]
        col[k], col[q] = col[q], col[k]
        for i in range(k + 1, n):
            f = A[i, k] / A[k, k]
            if f != 0.0:
                for j in range(k, n):
                    A[i, j] -= f * A[k, j]
                for c in range(m):
                    y[i, c] -= f * y[k, c]
    ok = True
    for i in range(rank, n):
        if abs(y[i, 0]) > INCONSISTENT * norm0 or abs(y[i, m - 1]) > INCONSISTENT * norm1:
            ok = False
    for c in range(m):
        for i in range(n):
            x[i, c] = 0.0
        for k in range(rank - 1, -1, -1):
            acc = y[k, c]
            for j in range(k + 1, rank):
                acc -= A[k, j] * x[col[j], c]
            x[col[k], c] = acc / A[k, k]
        for i in range(n):
            x[i, c] *= s[i]
    return ok


@njit(cache=True, inline="always")
def ply_stiffness(row, Q, params, d1, d2, out):
    """Q11, Q12, Q22, Q66 of a ply row with E1 scaled by d1 and E2, G12 by d2 (the table's own when intact)."""
    if d1 == 1.0 and d2 == 1.0:
        for a in range(4):
            out[a] = Q[row, a]
        return
    e1 = d1 * params[row, P.E1]
    e2 = d2 * params[row, P.E2]
    nu = params[row, P.NU12]
    if not e1 > 0.0:
        out[0] = out[1] = out[2] = out[3] = 0.0
        return
    den = 1.0 - nu * nu * e2 / e1
    out[0] = e1 / den
    out[1] = nu * e2 / den
    out[2] = e2 / den
    out[3] = d2 * params[row, P.G12]


#: Values of one ply's terms in the section sums: its K[0:3, 0:3], K[0:3, 3:6] and K[3:6, 3:6] (row by row, 9
#: each), then its thermal and moisture force and moment resultants (3 each).
NTERM = 33


@njit(cache=True, inline="always")
def ply_terms(row, z, cs, share, q, f1, f2, out):
    """One ply's terms of [A B; B D] and of the thermal and moisture resultants into ``out`` (:data:`NTERM`,).

    ``q`` (4,): the ply's Q11, Q12, Q22, Q66 (:func:`ply_stiffness`); ``f1``, ``f2``: its free strains along the
    material axes (α·ΔT + β·ΔM). The section is the sum of the terms of its plies in ply order
    (:func:`running_sums`).
    """
    c, s = cs[row, 0], cs[row, 1]
    cc, ss, cx = c * c, s * s, c * s
    q11, q12, q22, q66 = q[0], q[1], q[2], q[3]
    # Q̄ = T Q Tᵀ (docs/conventions.md), order x, y, xy.
    b11 = q11 * cc * cc + 2.0 * (q12 + 2.0 * q66) * cc * ss + q22 * ss * ss
    b22 = q11 * ss * ss + 2.0 * (q12 + 2.0 * q66) * cc * ss + q22 * cc * cc
    b12 = (q11 + q22 - 4.0 * q66) * cc * ss + q12 * (cc * cc + ss * ss)
    b66 = (q11 + q22 - 2.0 * q12 - 2.0 * q66) * cc * ss + q66 * (cc * cc + ss * ss)
    b16 = (q11 - q12 - 2.0 * q66) * cc * cx + (q12 - q22 + 2.0 * q66) * ss * cx
    b26 = (q11 - q12 - 2.0 * q66) * ss * cx + (q12 - q22 + 2.0 * q66) * cc * cx
    Qb = ((b11, b12, b16), (b12, b22, b26), (b16, b26, b66))
    zb, zt = z[row, 0], z[row, 2]
    w1 = share[row] * (zt - zb)
    w2 = share[row] * (zt * zt - zb * zb) / 2.0
    w3 = share[row] * (zt * zt * zt - zb * zb * zb) / 3.0
    # Free strain in laminate axes, ε_xy = T⁻ᵀ ε_12: (α1 c² + α2 s², α1 s² + α2 c², 2 (α1 − α2) c s).
    free = (f1 * cc + f2 * ss, f1 * ss + f2 * cc, 2.0 * (f1 - f2) * cx)
    for a in range(3):
        nt = 0.0
        for b in range(3):
            out[3 * a + b] = w1 * Qb[a][b]
            out[9 + 3 * a + b] = w2 * Qb[a][b]
            out[18 + 3 * a + b] = w3 * Qb[a][b]
            nt += Qb[a][b] * free[b]
        out[27 + a] = w1 * nt
        out[30 + a] = w2 * nt


@njit(cache=True, inline="always")
def running_sums(terms, sums, k0, n):
    """``sums[k + 1] = sums[k] + terms[k]`` for k0 ≤ k < n (``sums[0]`` zero): the section of plies 0..k.

    Only the sums after a ply whose terms changed are formed again; the sums keep the order of a ply-by-ply
    summation, so the section has the same bits as one summed from scratch.
    """
    if k0 == 0:
        for a in range(NTERM):
            sums[0, a] = 0.0
    for k in range(k0, n):
        for a in range(NTERM):
            sums[k + 1, a] = sums[k, a] + terms[k, a]


@njit(cache=True, inline="always")
def section_from_sums(total, K, fixed):
    """[A B; B D] (6, 6) and the thermal and moisture resultants (6,) from a section's sums (:func:`ply_terms`)."""
    for a in range(3):
        for b in range(3):
            K[a, b] = total[3 * a + b]
            K[a, b + 3] = total[9 + 3 * a + b]
            K[b + 3, a] = total[9 + 3 * a + b]
            K[a + 3, b + 3] = total[18 + 3 * a + b]
        fixed[a] = total[27 + a]
        fixed[a + 3] = total[30 + a]
