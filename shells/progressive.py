"""Progressive failure to the last ply by ply discount (numba): first- and last-ply load factors per cell and case.

The case's mechanical resultants are scaled by a load factor λ; the fixed part (thermal and moisture
resultants, and the resultants of held cases) is held. With the section's current ply stiffnesses the mid-plane
strains of both parts are solved and, at the bottom, middle and top of every ply that has not failed in its
fibres, the in-plane material-axis stresses (σ1, σ2, τ12) are formed. An intact ply is checked by the chosen
criteria (its strength ratio and mode); a ply with a matrix failure only by its fibres (σ1 against Xt and Xc,
the fibre check of the ply discount). When plies are overloaded at the current λ after the last discount (their
ratio is below λ), every one of them fails at λ; otherwise λ rises to the smallest ratio and that ply — and every
ply whose ratio ties with it within :data:`~shells.progressive_exact.TIE` — fails. A failed ply is discounted
for its mode:

- matrix failure (a mode whose name does not start with "fibre", on a ply): E2 and G12 multiplied by
  ``matrix_retained``;
- fibre failure, or any failure of an isotropic layer: E1, E2 and G12 multiplied by ``fibre_retained``;

and the section is solved again. The analysis ends when every ply that carries in-plane load (every non-core
ply) has failed in its fibres, when the stiffness left cannot carry the load (the load has a component outside
the range of the degraded [A B; B D], found by a solve with complete pivoting on the diagonally scaled
matrix), or when no ply fails any more. The first failure's λ is the first-ply factor, the λ at the end the
last-ply factor (inf when the laminate never fails completely under the load direction).

Transverse shear, σ3 and sandwich face checks are not part of the discount: the stresses here are the in-plane
ones (τ13 = τ23 = σ3 = 0). Cost: each step sums the section again only from the first ply whose stiffness
changed (each ply's terms are kept, :func:`shells.degraded.ply_terms`; the sums keep the ply order, so the section
has the bits of a rebuild), solves it and checks the plies: a ply's map from strains to its material stresses
(Q·T, :func:`_ply_map`) is formed when its stiffness changes, so its stresses at a step are two 3×3 products
and a line in z. The criteria are evaluated exactly (:mod:`shells.progressive_exact`) only on the intact plies
whose lower bound (the ratio of leaving a strength box inside every criterion, :mod:`shells.progressive_bounds`;
without fixed stresses the later of leaving the box and leaving a ball of normalised stresses, from the points'
gauges, :func:`shells.progressive_bounds.gauges`) does not rule out a failure at this step, and :data:`CONVEX`
criteria only at a ply's faces; without a fixed part no fixed stresses are formed. Conventions:
docs/conventions.md; the ply discount: docs/criteria.md.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from . import params as P
from .criteria.dispatch import prepare_table
from .criteria.roots import linear_ratio
from .criteria.state import FC, FT
from .degraded import NTERM, ply_stiffness, ply_terms, running_sums, section_from_sums, solve_scaled
from .progressive_exact import BOUND, TIE, exact_step
from .numba_cache import configure
from .progressive_bounds import gauges, no_gauges
from .recovery import drop_roundoff

configure()

#: Fraction of E2 and G12 kept after a matrix failure, and of every modulus after a fibre failure: 0, the
#: ply discount in which the failed moduli are set to zero (Kaw, Mechanics of Composite Materials, 2nd ed.,
#: 2006, ch. 4, laminate failure: partial ply discount for transverse or shear failure, complete for fibre
#: failure; from memory).
DEFAULT_MATRIX_RETAINED = 0.0
DEFAULT_FIBRE_RETAINED = 0.0
#: Criteria that check transverse shear, σ3 or sandwich faces, not the in-plane ply stresses: not used here.
OUT_OF_PLANE = ("core-shear", "core-crushing", "interlaminar", "wrinkling", "dimpling")
#: Criteria whose safe region in the in-plane stresses is convex (a box, a parallelepiped in strain, an ellipsoid
#: with |F12*| ≤ 1, von Mises, principal-stress and Tresca bounds): along a ply the stress is affine in z, so the
#: middle point is the mean of the faces' states and cannot fail before both faces; they are checked at the
#: faces only.
CONVEX = ("max-stress", "max-strain", "tsai-wu", "von-mises")
#: Values of one failure event in the sequence output: ply slot, criterion code (−1: fibre check of a ply with
#: a matrix failure), mode index, discount (1 matrix, 2 fibre), load factor.
EVENT = 5
#: Codes of the fibre check of a ply with a matrix failure in the sequence output.
FIBRE_CHECK = -1


def in_plane(name: str) -> bool:
    """Whether criterion ``name`` checks in-plane ply stresses (usable to find failures in the discount)."""
    return name not in OUT_OF_PLANE


@njit(cache=True, inline="always")
def _ply_map(ct, st, q, f1, f2, out):
    """A ply's map from laminate-axis strains to its material stresses, formed when its stiffness changes.

    out[0:9]: the 3×3 map (row by row) from (εx, εy, γxy) to (σ1, σ2, τ12), Q·T with the ply at angle θ
    (ct = cos θ, st = sin θ) from the laminate axes (docs/conventions.md); out[9:11]: the stresses σ1, σ2 of its
    free strains f1, f2 (α·ΔT + β·ΔM along the material axes), to be subtracted. ``q``: Q11, Q12, Q22, Q66.
    """
    pc, ps, px = ct * ct, st * st, ct * st
    q0, q1, q2, q3 = q[0], q[1], q[2], q[3]
    out[0] = q0 * pc + q1 * ps
    out[1] = q0 * ps + q1 * pc
    out[2] = (q0 - q1) * px
    out[3] = q1 * pc + q2 * ps
    out[4] = q1 * ps + q2 * pc
    out[5] = (q1 - q2) * px
    out[6] = -2.0 * q3 * px
    out[7] = 2.0 * q3 * px
    out[8] = q3 * (pc - ps)
    out[9] = q0 * f1 + q1 * f2
    out[10] = q1 * f1 + q2 * f2


@njit(cache=True, inline="always")
def _stresses(maps, k, e, f0, f1, z0, z1, z2, mid, out):
    """(σ1, σ2, τ12) of ply slot ``k`` for the mid-plane strains and curvatures ``e`` (6,) through its map
    ``maps[k]`` (:func:`_ply_map`), less (f0, f1, 0), at z0 (bottom), z2 (top) and, when ``mid``, z1 into
    out[k, pt, 0:3]. Indexed on the parent arrays: row views made at every ply and step cost 6–10 % of the kernel.
    """
    a0 = maps[k, 0] * e[0] + maps[k, 1] * e[1] + maps[k, 2] * e[2] - f0
    a1 = maps[k, 3] * e[0] + maps[k, 4] * e[1] + maps[k, 5] * e[2] - f1
    a2 = maps[k, 6] * e[0] + maps[k, 7] * e[1] + maps[k, 8] * e[2]
    b0 = maps[k, 0] * e[3] + maps[k, 1] * e[4] + maps[k, 2] * e[5]
    b1 = maps[k, 3] * e[3] + maps[k, 4] * e[4] + maps[k, 5] * e[5]
    b2 = maps[k, 6] * e[3] + maps[k, 7] * e[4] + maps[k, 8] * e[5]
    out[k, 0, 0] = a0 + z0 * b0
    out[k, 0, 1] = a1 + z0 * b1
    out[k, 0, 2] = a2 + z0 * b2
    out[k, 2, 0] = a0 + z2 * b0
    out[k, 2, 1] = a1 + z2 * b1
    out[k, 2, 2] = a2 + z2 * b2
    if mid:
        out[k, 1, 0] = a0 + z1 * b0
        out[k, 1, 1] = a1 + z1 * b1
        out[k, 1, 2] = a2 + z1 * b2


@njit(cache=True, parallel=True)
def progressive_block(sec, share, boxes, balls, codes, masks, fibre_mode, retained, blk, first, last, seq):
    """First- and last-ply factors of a block of cells × cases (written in place).

    Parameters
    ----------
    sec : SectionArrays
        Section and ply tables (allowables of the cases' environment).
    share : float64 (nrows,)
        Share of each ply row in the stiffness of its layer (1; ½ for each half of a wound ±α layer).
    boxes : float64 (nrows, ncrit)
        Scale κ of the strength box inside each chosen criterion's safe region, per ply row
        (:func:`shells.progressive_bounds.criterion_boxes`; 0: no box, inf: the criterion does not apply). The
        row's smallest gives the plies' lower bound; a criterion is left out where the states stay in its own box
        up to the step's limit (:func:`shells.progressive_exact.ply_ratios`).
    balls : float64 (nrows, ncrit)
        κ of the ball of normalised stresses inside each criterion's safe region, per ply row
        (:func:`shells.progressive_bounds.criterion_balls`; 0: no ball): used as ``boxes``, with the ball's gauge,
        where the ply has no fixed stresses.
    codes : int64 (ncrit,), masks : bool (ncrit, 3)
        Criteria that find the failures and the points they are checked at (the middle point may be left out
        for the :data:`CONVEX` ones).
    fibre_mode : bool (ncrit, nmode)
        Whether mode m of criterion c is a fibre failure.
    retained : float64 (2,)
        Fraction of the moduli kept after a matrix failure (E2, G12) and after a fibre failure (all).
    blk : BlockInputs
        Resultants, temperature and moisture changes, skipped cell-cases, sections, material angles and the
        held part of the cases (pressure and transverse shear are not used).
    first, last : float64 (ncell, ncase_total)
        Load factors of the first and of the last ply failure (global case index ``blk.case0 + j``).
    seq : float64 (ncase, ncell, 2·maxply, EVENT), or zero-size
        Failure sequence when given: per event ply slot, criterion code, mode, discount and load factor (NaN
        rows after the last event).
    """
    R, dT, dM, skip = blk.resultants, blk.delta_T, blk.delta_M, blk.skip
    cell_sec, cell_cos, cell_sin, case0, held_R = blk.section, blk.cos_phi, blk.sin_phi, blk.case0, blk.held_resultants
    first_row, nply, z, cs, Q, params = sec.first, sec.nply, sec.z, sec.cs, sec.Q, sec.params
    alpha, beta = sec.alpha, sec.beta
    ncase, ncell = R.shape[0], R.shape[1]
    held = held_R.size > 0
    record = seq.size > 0
    maxply = 0
    for s in range(nply.shape[0]):
        maxply = max(maxply, nply[s])
    middle = False
    for m in range(codes.shape[0]):
        middle = middle or masks[m, 1]
    forms, consts = prepare_table(codes, params)   # each criterion's constants on each ply, computed once
    kappa = np.full(boxes.shape[0], np.inf)       # each row's box (ball) inside every criterion: the smallest
    kball = np.full(boxes.shape[0], np.inf)
    for row in range(boxes.shape[0]):
        for m in range(boxes.shape[1]):
            kappa[row] = min(kappa[row], boxes[row, m])
            kball[row] = min(kball[row], balls[row, m])
    inv_kappa = 1.0 / kappa                       # their reciprocals: a ply's bound takes one division
    inv_kball = 1.0 / kball
    inv = np.zeros((boxes.shape[0], 5))          # reciprocal strengths of the box: Xt, Xc, Yt, Yc, S12
    for row in range(boxes.shape[0]):
        if 0.0 < kappa[row] < np.inf:
            for a, col in enumerate((P.XT, P.XC, P.YT, P.YC, P.S12)):
                inv[row, a] = 1.0 / params[row, col]
    for i in prange(ncell):
        K = np.empty((6, 6))
        rhs = np.empty((6, 2))
        sol = np.empty((6, 2))
        gf = np.empty(6)
        em = np.empty(6)
        ef = np.empty(6)
        hf = np.empty(6)
        qk = np.empty((maxply, 4))
        maps = np.empty((maxply, 11))
        f1k = np.empty(maxply)
        f2k = np.empty(maxply)
        terms = np.empty((maxply, NTERM))
        sums = np.empty((maxply + 1, NTERM))
        wa = np.empty((6, 6))
        wy = np.empty((6, 2))
        ws = np.empty(6)
        wc = np.empty(6, np.int64)
        status = np.empty(maxply, np.int64)
        d1 = np.empty(maxply)
        d2 = np.empty(maxply)
        rk = np.empty(maxply)
        ck = np.empty(maxply, np.int64)
        mk = np.empty(maxply, np.int64)
        lb = np.empty(maxply)
        fg = np.empty((maxply, 3, 2))         # gauges of each ply's points (gauges)
        sm = np.empty(6)
        sf = np.empty(6)
        done = np.empty(maxply, np.bool_)
        bm = np.zeros((maxply, 3, 6))
        bf = np.zeros((maxply, 3, 6))
        bf_zero = np.ones(maxply, np.bool_)   # bf[k] all zero (no fixed stresses formed since)
        s = cell_sec[i]
        c, sn = cell_cos[i], cell_sin[i]
        cc, ss, cx = c * c, sn * sn, c * sn
        p0, n = first_row[s], nply[s]
        zmax = max(abs(z[p0, 0]), abs(z[p0 + n - 1, 2]))
        for j in range(ncase):
            cj = case0 + j
            if skip[j, i]:
                first[i, cj] = np.nan
                last[i, cj] = np.nan
                continue
            r = R[j, i]
            for o in (0, 3):
                rhs[o, 0] = cc * r[o] + ss * r[o + 1] + 2.0 * cx * r[o + 2]
                rhs[o + 1, 0] = ss * r[o] + cc * r[o + 1] - 2.0 * cx * r[o + 2]
                rhs[o + 2, 0] = -cx * r[o] + cx * r[o + 1] + (cc - ss) * r[o + 2]
            t, h = dT[j, i], dM[j, i]
            for a in range(6):
                hf[a] = 0.0
            if held:
                rh = held_R[j, i]
                for o in (0, 3):
                    hf[o] = cc * rh[o] + ss * rh[o + 1] + 2.0 * cx * rh[o + 2]
                    hf[o + 1] = ss * rh[o] + cc * rh[o + 1] - 2.0 * cx * rh[o + 2]
                    hf[o + 2] = -cx * rh[o] + cx * rh[o + 1] + (cc - ss) * rh[o + 2]
            carrying = 0
            for k in range(n):
                row = p0 + k
                status[k] = 0
                d1[k] = 1.0
                d2[k] = 1.0
                if params[row, P.KIND] != P.KIND_CORE:
                    carrying += 1
                ply_stiffness(row, Q, params, 1.0, 1.0, qk[k])
                f1k[k] = alpha[row, 0] * t + beta[row, 0] * h
                f2k[k] = alpha[row, 1] * t + beta[row, 1] * h
                ply_terms(row, z, cs, share, qk[k], f1k[k], f2k[k], terms[k])
                _ply_map(cs[row, 0], cs[row, 1], qk[k], f1k[k], f2k[k], maps[k])
            k0 = 0                     # first ply whose terms changed since the section was last summed
            lam = 0.0
            f_first = np.inf
            f_last = np.inf
            nev = 0
            fibre_failed = 0
            for _ in range(2 * n + 1):
                running_sums(terms, sums, k0, n)
                k0 = n
                section_from_sums(sums[n], K, gf)
                for a in range(6):
                    rhs[a, 1] = gf[a] + hf[a] if held else gf[a]
                if not solve_scaled(K, rhs, sol, wa, wy, ws, wc):
                    f_last = lam       # the stiffness left no longer carries the load
                    break
                for a in range(6):
                    em[a] = sol[a, 0]
                    ef[a] = sol[a, 1]
                drop_roundoff(em, zmax)
                drop_roundoff(ef, zmax)
                no_fixed = True        # no fixed part at all: its stresses are zero (the same bits as formed)
                for a in range(6):
                    no_fixed = no_fixed and ef[a] == 0.0
                # Stresses at the checked points; the exact ratio of plies with a matrix failure (their fibre
                # check) and a lower bound for intact plies (leaving the box κ·B inside every criterion).
                rmin = np.inf
                kmin = -1
                for k in range(n):
                    rk[k] = np.inf
                    lb[k] = np.inf
                    if status[k] == 2:
                        done[k] = True             # fibre-failed: never checked again
                        continue
                    row = p0 + k
                    kap = kappa[row]
                    mid = middle and status[k] == 0
                    zero_fixed = no_fixed and maps[k, 9] == 0.0 and maps[k, 10] == 0.0
                    _stresses(maps, k, em, 0.0, 0.0, z[row, 0], z[row, 1], z[row, 2], mid, bm)
                    if zero_fixed:
                        if not bf_zero[k]:
                            for pt in range(3):
                                bf[k, pt, 0] = bf[k, pt, 1] = bf[k, pt, 2] = 0.0
                            bf_zero[k] = True
                    else:
                        bf_zero[k] = False
                        _stresses(maps, k, ef, maps[k, 9], maps[k, 10], z[row, 0], z[row, 1], z[row, 2], mid, bf)
                    if status[k] == 1:
                        for pt in (0, 2):
                            sr = linear_ratio(bf[k, pt, 0], bm[k, pt, 0], params[row, P.XT], params[row, P.XC])
                            if sr < rk[k]:
                                rk[k], ck[k] = sr, -1
                                mk[k] = FT if bf[k, pt, 0] + sr * bm[k, pt, 0] >= 0.0 else FC
                    elif kap == 0.0:
                        lb[k] = -np.inf
                        no_gauges(fg, k)
                    elif kap < np.inf:
                        if zero_fixed:
                            # No fixed stresses: the faces leave κ·B at κ / gauge, and the ball at its κ over its
                            # gauge; the later of the two (a little under it) is a bound.
                            gauges(bm, k, inv, row, fg)
                            if fg[k, 1, 0] > 0.0:
                                lb[k] = (1.0 - BOUND) / min(fg[k, 1, 0] * inv_kappa[row], fg[k, 1, 1] * inv_kball[row])
                        else:
                            no_gauges(fg, k)
                            for pt in (0, 2):
                                lo = min(linear_ratio(bf[k, pt, 0], bm[k, pt, 0], kap * params[row, P.XT],
                                                      kap * params[row, P.XC]),
                                         linear_ratio(bf[k, pt, 1], bm[k, pt, 1], kap * params[row, P.YT],
                                                      kap * params[row, P.YC]),
                                         linear_ratio(bf[k, pt, 2], bm[k, pt, 2], kap * params[row, P.S12],
                                                      kap * params[row, P.S12]))
                                lb[k] = min(lb[k], lo)
                    if status[k] == 1:
                        rmin = min(rmin, rk[k])
                        done[k] = True
                    else:
                        done[k] = lb[k] == np.inf      # no chosen criterion applies: never fails
                    if not done[k] and (kmin < 0 or lb[k] < lb[kmin]):
                        kmin = k                        # the first ply of the lowest bound, evaluated first
                # Exact ratios of the intact plies whose bound does not exceed the largest ratio that can still fail
                # now (the current λ, or the smallest ratio so far): the lowest bound first, then one pass.
                rmin = exact_step(codes, masks, middle, forms, consts, params, boxes, balls, p0, n, bm, bf, lb, fg,
                                  done, rk, ck, mk, lam, rmin, kmin, sm, sf)
                if rmin == np.inf:
                    break              # nothing fails any more under this load direction
                # Plies overloaded at the current λ after the last discount all fail at λ; otherwise λ rises to
                # the smallest ratio and the plies tying with it fail.
                cut = lam if rmin <= lam else rmin
                lam = cut
                if f_first == np.inf:
                    f_first = lam
                for k in range(n):
                    if not rk[k] <= cut * (1.0 + TIE):
                        continue
                    complete = status[k] == 1 or params[p0 + k, P.KIND] != P.KIND_PLY
                    if status[k] == 0 and not complete and ck[k] >= 0 and mk[k] >= 0:
                        complete = fibre_mode[ck[k], mk[k]]
                    if complete:
                        status[k] = 2
                        d1[k] *= retained[1]
                        d2[k] *= retained[1]
                        if params[p0 + k, P.KIND] != P.KIND_CORE:
                            fibre_failed += 1
                    else:
                        status[k] = 1
                        d2[k] *= retained[0]
                    ply_stiffness(p0 + k, Q, params, d1[k], d2[k], qk[k])
                    ply_terms(p0 + k, z, cs, share, qk[k], f1k[k], f2k[k], terms[k])
                    _ply_map(cs[p0 + k, 0], cs[p0 + k, 1], qk[k], f1k[k], f2k[k], maps[k])
                    k0 = min(k0, k)
                    if record and nev < seq.shape[2]:
                        seq[j, i, nev, 0] = k
                        seq[j, i, nev, 1] = codes[ck[k]] if ck[k] >= 0 else FIBRE_CHECK
                        seq[j, i, nev, 2] = mk[k]
                        seq[j, i, nev, 3] = status[k]
                        seq[j, i, nev, 4] = lam
                        nev += 1
                if fibre_failed >= carrying:
                    f_last = lam
                    break
            first[i, cj] = f_first
            last[i, cj] = f_last
