"""Reference kernels for the recovery benchmark: the default criteria, written for speed (benchmark only).

Never imported by the product. Each kernel does the work of
``shells.recovery.recover_block`` on the benchmark's setup — one section of
ply layers for every cell, transverse shear from Qx, Qy, the thermal stress of
each case held (fixed) and nothing else held — for the default criteria
(max stress, max strain, Tsai-Wu, Hashin): exact strength ratios with the fixed
part, the envelope per cell and ply (margin, ratio, case, point, criterion,
mode), the lowest margin per cell and case and per cell and criterion. Like the
product, every criterion is evaluated at the bottom, middle and top of every ply
(``faces_only=True``: the three in-plane criteria at the faces only).
:func:`plain` can add Puck or LaRC03, evaluated by the criteria's own scalar
functions with their per-ply constants computed once (so that reference measures
what the kernel adds around a criterion, not a faster criterion).

- :func:`plain` — a single-purpose fused kernel written the plain way: a loop over cells (parallel), cases,
  plies and points, each criterion by its module's scalar function (``limits_ratio``, ``strain_ratio``,
  ``plane_ratio``, ``hashin_ratio``) called directly with its per-ply constants computed once: no dispatch by
  code, no property vector, no point-state arrays.
- :func:`vector` — written for the vector units: blocks of 64 cells held as structure-of-arrays, one loop over
  the cells of a block per ply point in which every branch is a select, so the compiler vectorises it.

Both follow the product's arithmetic operation by operation (the vectorised one in its own select forms), so
their margins equal the product's bit for bit (``bench/kernel_bench.py`` checks this on every run).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from shells.criteria.hashin import hashin_ratio
from shells.criteria.larc03 import larc03_ratio
from shells.criteria.max_strain import strain_ratio
from shells.criteria.max_stress import limits_ratio
from shells.criteria.plane import plane_ratio
from shells.criteria.puck import puck_ratio

INF = np.inf
#: Columns of the per-ply constant table :func:`constants`.
(XT, XC, YT, YC, S12, E1, E2, G12, NU12, EFT, EFC, EMT, EMC, ESH, F1, F2, F11, F22, F66, F12, ST, HK, HQ, HQ23,
 HKT, HLIN, HKC) = range(27)
NCONST = 27
#: Registry codes of the default criteria, in their order (max stress, max strain, Tsai-Wu, Hashin).
CODES = np.array([0, 1, 3, 5], dtype=np.int64)
LANES = 64


def constants(params: np.ndarray) -> np.ndarray:
    """Per-ply constants (nply, NCONST) from the product's property vectors, computed once.

    The same expressions as the criteria's own code, so the values are identical.
    """
    from shells import params as P

    p = np.asarray(params, dtype=np.float64)
    xt, xc, yt, yc, s = (p[:, i] for i in (P.XT, P.XC, P.YT, P.YC, P.S12))
    s23 = p[:, P.S_T]
    k = np.empty((p.shape[0], NCONST))
    k[:, XT], k[:, XC], k[:, YT], k[:, YC], k[:, S12] = xt, xc, yt, yc, s
    for col, idx in ((E1, P.E1), (E2, P.E2), (G12, P.G12), (NU12, P.NU12), (EFT, P.STRAIN_FT),
                     (EFC, P.STRAIN_FC), (EMT, P.STRAIN_MT), (EMC, P.STRAIN_MC), (ESH, P.STRAIN_SH)):
        k[:, col] = p[:, idx]
    k[:, F1], k[:, F2] = 1.0 / xt - 1.0 / xc, 1.0 / yt - 1.0 / yc
    k[:, F11], k[:, F22], k[:, F66] = 1.0 / (xt * xc), 1.0 / (yt * yc), 1.0 / (s * s)
    k[:, F12] = p[:, P.F12STAR] * np.sqrt(k[:, F11] * k[:, F22])
    k[:, ST] = s23
    k[:, HK], k[:, HQ], k[:, HQ23], k[:, HKT] = 1.0 / (xt * xt), 1.0 / (s * s), 1.0 / (s23 * s23), 1.0 / (yt * yt)
    k[:, HLIN] = ((0.5 * yc / s23) ** 2 - 1.0) / yc
    k[:, HKC] = 0.25 / (s23 * s23)
    return k


# ---------------------------------------------------------------------------------------------------------
# Plain scalar forms: the criteria's own scalar functions on the constants of :func:`constants`


@njit(inline="always")
def default_ratio(slot, m1, m2, m6, m13, m23, m3, g1, g2, g6, g3, k):
    """Strength ratio and mode of default criterion ``slot`` (max stress, max strain, Tsai-Wu, Hashin)."""
    if slot == 0:
        return limits_ratio(m1, g1, m2, g2, m6, g6, k[XT], k[XC], k[YT], k[YC], k[S12])
    if slot == 1:
        return strain_ratio(m1, m2, m6, g1, g2, g6, k[E1], k[E2], k[G12], k[NU12], k[EFT], k[EFC], k[EMT],
                            k[EMC], k[ESH])
    if slot == 2:
        return plane_ratio(m1, m2, m6, g1, g2, g6, k[F1], k[F2], k[F11], k[F22], k[F66], k[F12], 0.0, INF)
    return hashin_ratio(m1, m2, m6, m13, m23, m3, g1, g2, g6, 0.0, 0.0, g3, k[XC], k[HK], k[HQ], k[HQ23], k[HKT],
                        k[HLIN], k[HKC])


@njit(inline="always")
def to_material(ex, ey, gxy, pc, ps, px):
    """Strains (ε1, ε2, γ12) from laminate-axis strains; pc, ps, px = cos²θ, sin²θ, cosθ·sinθ."""
    return pc * ex + ps * ey + px * gxy, ps * ex + pc * ey - px * gxy, -2.0 * px * ex + 2.0 * px * ey + (pc - ps) * gxy


@njit(inline="always")
def ply_stresses(exm, eym, gxm, exf, eyf, gxf, pc, ps, px, q11, q12, q22, q66, fx, fy):
    """Material-axis stresses (σ1, σ2, τ12), mechanical then fixed, from laminate-axis strains at a point."""
    e1m, e2m, g12m = to_material(exm, eym, gxm, pc, ps, px)
    e1f, e2f, g12f = to_material(exf, eyf, gxf, pc, ps, px)
    return (q11 * e1m + q12 * e2m, q12 * e1m + q22 * e2m, q66 * g12m, q11 * (e1f - fx) + q12 * (e2f - fy),
            q12 * (e1f - fx) + q22 * (e2f - fy), q66 * g12f)


@njit(inline="always", error_model="numpy")
def generalised(r, c, sn, cc, ss, cx, comp, fixed, t, h, zmax, em, ef):
    """Mid-plane strains and curvatures, mechanical ``em`` and fixed ``ef`` (round-off dropped)."""
    gm = np.empty(6)
    gf = np.empty(6)
    for o in (0, 3):
        gm[o] = cc * r[o] + ss * r[o + 1] + 2.0 * cx * r[o + 2]
        gm[o + 1] = ss * r[o] + cc * r[o + 1] - 2.0 * cx * r[o + 2]
        gm[o + 2] = -cx * r[o] + cx * r[o + 1] + (cc - ss) * r[o + 2]
    for a in range(3):
        gf[a] = fixed[0, a] * t + fixed[2, a] * h
        gf[a + 3] = fixed[1, a] * t + fixed[3, a] * h
    for a in range(6):
        am = 0.0
        af = 0.0
        for b in range(6):
            am += comp[a, b] * gm[b]
            af += comp[a, b] * gf[b]
        em[a] = am
        ef[a] = af
    for e in (em, ef):
        scale = 0.0
        for a in range(3):
            scale = max(scale, abs(e[a]), abs(e[a + 3]) * zmax)
        tol = 1e-12 * scale
        for a in range(3):
            if abs(e[a]) <= tol:
                e[a] = 0.0
            if abs(e[a + 3]) * zmax <= tol:
                e[a + 3] = 0.0


@njit(inline="always")
def extra_ratio(extra, m1, m2, m6, g1, g2, g6, g3, kx):
    """Puck (code 6) or LaRC03 (code 7) by the criteria's own scalar forms, constants ``kx`` computed once."""
    unloaded = g1 == 0.0 and g2 == 0.0 and g6 == 0.0 and g3 == 0.0
    if extra == 6:
        return puck_ratio(m1, m2, m6, g1, g2, g6, unloaded, kx)
    return larc03_ratio(m1, m2, m6, g1, g2, g6, m1 >= 0.0 and unloaded, kx)


@njit(cache=True, parallel=True, error_model="numpy")
def plain(R, dT, dM, pres, hpres, fos, cphi, sphi, comp, fixed, z, Q, cs, alpha, beta, F, K, faces_only, extra,
          KX, env_ms, env_sr, env_case, env_point, env_crit, env_mode, case_ms, crit_ms):
    """The plain fused reference (arguments: see :func:`run`)."""
    ncase, ncell, n = R.shape[0], R.shape[1], z.shape[0]
    zmax = max(abs(z[0, 0]), abs(z[n - 1, 2]))
    for i in prange(ncell):
        em = np.empty(6)
        ef = np.empty(6)
        c, sn = cphi[i], sphi[i]
        cc, ss, cx = c * c, sn * sn, c * sn
        for j in range(ncase):
            r = R[j, i]
            t, h = dT[j, i], dM[j]
            generalised(r, c, sn, cc, ss, cx, comp, fixed, t, h, zmax, em, ef)
            qx = c * r[6] + sn * r[7]
            qy = -sn * r[6] + c * r[7]
            inv_fos = 1.0 / fos[j]
            m3, g3 = -pres[j], -hpres[j]
            for k in range(n):
                kk = K[k]
                ct, st = cs[k, 0], cs[k, 1]
                pc, ps, px = ct * ct, st * st, ct * st
                q11, q12, q22, q66 = Q[k, 0], Q[k, 1], Q[k, 2], Q[k, 3]
                fx = alpha[k, 0] * t + beta[k, 0] * h
                fy = alpha[k, 1] * t + beta[k, 1] * h
                for q in range(3):
                    zz = z[k, q]
                    m1, m2, m6, g1, g2, g6 = ply_stresses(
                        em[0] + zz * em[3], em[1] + zz * em[4], em[2] + zz * em[5], ef[0] + zz * ef[3],
                        ef[1] + zz * ef[4], ef[2] + zz * ef[5], pc, ps, px, q11, q12, q22, q66, fx, fy)
                    txz = F[k, q, 0, 0] * qx + F[k, q, 0, 1] * qy
                    tyz = F[k, q, 1, 0] * qx + F[k, q, 1, 1] * qy
                    m13, m23 = ct * txz + st * tyz, -st * txz + ct * tyz
                    for slot in range(4 if extra < 0 else 5):
                        if faces_only and slot < 3 and q == 1:          # in-plane criteria at the faces only
                            continue
                        if slot < 4:
                            sr, mode = default_ratio(slot, m1, m2, m6, m13, m23, m3, g1, g2, g6, g3, kk)
                        else:
                            sr, mode = extra_ratio(extra, m1, m2, m6, g1, g2, g6, g3, KX[k])
                        ms = sr * inv_fos - 1.0
                        case_ms[i, j] = ms if ms < case_ms[i, j] else case_ms[i, j]
                        crit_ms[i, slot] = ms if ms < crit_ms[i, slot] else crit_ms[i, slot]
                        if ms < env_ms[i, k]:
                            env_ms[i, k], env_sr[i, k], env_case[i, k] = ms, sr, j
                            env_point[i, k], env_crit[i, k] = q, (CODES[slot] if slot < 4 else extra)
                            env_mode[i, k] = mode


# ---------------------------------------------------------------------------------------------------------
# Select forms (no branches: the loops over the cells of a block vectorise)


@njit(inline="always", error_model="numpy")
def lin_v(f, m, up, lo):
    pos = m > 0.0
    r = (up - f if pos else f + lo) / (m if pos else -m)
    r = r if (pos or m < 0.0) else INF
    return 0.0 if (f >= up or f <= -lo) else r


@njit(inline="always", error_model="numpy")
def limits_v(m1, f1, m2, f2, m6, f6, xt, xc, yt, yc, s):
    r1 = lin_v(f1, m1, xt, xc)
    r2 = lin_v(f2, m2, yt, yc)
    r6 = lin_v(f6, m6, s, s)
    none = r1 == INF and r2 == INF and r6 == INF
    b1 = r1 <= r2 and r1 <= r6
    b2 = r2 <= r6
    r = r1 if b1 else (r2 if b2 else r6)
    md = (0 if f1 + r1 * m1 >= 0.0 else 1) if b1 else ((2 if f2 + r2 * m2 >= 0.0 else 3) if b2 else 4)
    return (INF if none else r), (-1 if none else md)


@njit(inline="always", error_model="numpy")
def crossing_v(a, b, c, lo, hi):
    g0 = (a * lo + b) * lo + c
    disc = b * b - 4.0 * a * c
    q = -0.5 * (b + math.copysign(math.sqrt(disc), b))
    u, v = q / a, c / q
    swap = not u <= v
    r1, r2 = (v if swap else u), (u if swap else v)
    zero = q == 0.0
    r1, r2 = (0.0 if zero else r1), (0.0 if zero else r2)
    neg = disc < 0.0
    r1, r2 = (INF if neg else r1), (INF if neg else r2)
    flat = a == 0.0
    r1, r2 = (-c / b if flat else r1), (INF if flat else r2)
    r1 = INF if (flat and b == 0.0) else r1
    r = r1 if (lo < r1 and r1 <= hi) else (r2 if (lo < r2 and r2 <= hi) else INF)
    return lo if g0 >= 0.0 else r


@njit(inline="always", error_model="numpy")
def tsai_wu_v(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12):
    a = f11 * m1 * m1 + f22 * m2 * m2 + f66 * m6 * m6 + 2.0 * f12 * m1 * m2
    b = (f1 * m1 + f2 * m2 + 2.0 * (f11 * g1 * m1 + f22 * g2 * m2 + f66 * g6 * m6)
         + 2.0 * f12 * (g1 * m2 + g2 * m1))
    c = f1 * g1 + f2 * g2 + f11 * g1 * g1 + f22 * g2 * g2 + f66 * g6 * g6 + 2.0 * f12 * g1 * g2 - 1.0
    r = crossing_v(a, b, c, 0.0, INF)
    s1, s2, s6 = g1 + r * m1, g2 + r * m2, g6 + r * m6
    fib = f1 * s1 + f11 * s1 * s1
    mat = f2 * s2 + f22 * s2 * s2
    she = f66 * s6 * s6
    md = 4 if (she >= fib and she >= mat) else ((0 if s1 >= 0.0 else 1) if fib >= mat else (2 if s2 >= 0.0 else 3))
    return r, (-1 if r == INF else md)


@njit(inline="always", error_model="numpy")
def sign_v(f, m, lo, hi):
    v = f + (2.0 * lo + 1.0 if hi == INF else 0.5 * (lo + hi)) * m
    return 1 if v > 0.0 else (-1 if v < 0.0 else 0)


@njit(inline="always", error_model="numpy")
def hashin_piece(fibre, gs, ms, lo, hi, an, bn, cn, ap, bp, cp):
    """One piece of constant sign: coefficients (an, bn, cn) where the sign is negative, (ap, bp, cp) else."""
    sg = sign_v(gs, ms, lo, hi)
    neg = sg < 0 if fibre else not sg >= 0
    r = crossing_v(an if neg else ap, bn if neg else bp, cn if neg else cp, lo, hi)
    md = (1 if neg else 0) if fibre else (3 if neg else 2)
    bad = (not hi > lo) or (fibre and sg == 0)
    return (INF if bad else r), (-1 if bad else md)


@njit(inline="always", error_model="numpy")
def hashin_v(m1, m2, m6, m13, m23, m3, g1, g2, g6, g13, g23, g3, xc, hk, hq, hq23, hkt, hlin, hkc):
    # fibre: σ1 < 0 linear, σ1 > 0 quadratic
    an, bn, cn = 0.0, -m1 / xc, -g1 / xc - 1.0
    ap = hk * m1 * m1 + hq * (m6 * m6 + m13 * m13)
    bp = 2.0 * (hk * g1 * m1 + hq * (g6 * m6 + g13 * m13))
    cp = hk * g1 * g1 + hq * (g6 * g6 + g13 * g13) - 1.0
    bf = INF if m1 == 0.0 else -g1 / m1
    bf = bf if bf > 0.0 else INF
    r0, d0 = hashin_piece(True, g1, m1, 0.0, bf, an, bn, cn, ap, bp, cp)
    r1, d1 = hashin_piece(True, g1, m1, bf, INF, an, bn, cn, ap, bp, cp)
    rf, df = (r1 if r0 == INF else r0), (d1 if r0 == INF else d0)
    # matrix: σ2 + σ3 ≥ 0 tension, < 0 compression
    gs, ms = g2 + g3, m2 + m3
    a = hq * (m6 * m6 + m13 * m13) + hq23 * (m23 * m23 - m2 * m3)
    b = hq * ((g6 * m6 + g6 * m6) + (g13 * m13 + g13 * m13)) + hq23 * ((g23 * m23 + g23 * m23) - (g2 * m3 + g3 * m2))
    c = hq * (g6 * g6 + g13 * g13) + hq23 * (g23 * g23 - g2 * g3) - 1.0
    at, bt, ct = a + hkt * ms * ms, b + 2.0 * hkt * gs * ms, c + hkt * gs * gs
    ac, bc, cc = a + hkc * ms * ms, b + 2.0 * hkc * gs * ms + hlin * ms, c + hkc * gs * gs + hlin * gs
    bm = INF if ms == 0.0 else -gs / ms
    bm = bm if bm > 0.0 else INF
    r0, d0 = hashin_piece(False, gs, ms, 0.0, bm, ac, bc, cc, at, bt, ct)
    r1, d1 = hashin_piece(False, gs, ms, bm, INF, ac, bc, cc, at, bt, ct)
    rm, dm = (r1 if r0 == INF else r0), (d1 if r0 == INF else d0)
    r = rm if rm < rf else (INF if rf == INF else rf)
    d = dm if rm < rf else (-1 if rf == INF else df)
    return r, d


#: Rows of a block's work array (each LANES long): mid-plane strains and curvatures, mechanical (6) and fixed (6),
#: Qx, Qy and ΔT per lane, then the current ply's envelope (margin, ratio, tag), the criterion minima (4) and
#: the case minimum. One array at offsets known when compiling: the loops over lanes need no alias checks.
EM, EF, QX, QY, DT, CUR, CRIT, CASE, NROW = 0, 6, 12, 13, 14, 15, 18, 22, 23


@njit(inline="always", error_model="numpy")
def merge_v(ms, sr, tag, slot, l, w):
    """Lane ``l``'s envelope of the current ply and its minima updated by one criterion value.

    The tag packs case, point, criterion and mode in a float, so the loop writes one array and vectorises.
    """
    c = (CRIT + slot) * LANES + l
    w[c] = ms if ms < w[c] else w[c]
    c = CASE * LANES + l
    w[c] = ms if ms < w[c] else w[c]
    better = ms < w[CUR * LANES + l]
    w[CUR * LANES + l] = ms if better else w[CUR * LANES + l]
    w[(CUR + 1) * LANES + l] = sr if better else w[(CUR + 1) * LANES + l]
    w[(CUR + 2) * LANES + l] = tag if better else w[(CUR + 2) * LANES + l]


@njit(inline="always", error_model="numpy")
def lanes_at(w, nl, zz, base, face, pc, ps, px, q11, q12, q22, q66, a0, a1, b0, b1, h, ct, st, fq, k, inv_fos,
             m3, g3):
    """Every criterion at one ply point for the lanes of a block (the vectorised loop)."""
    xt, xc, yt, yc, s12 = k[XT], k[XC], k[YT], k[YC], k[S12]
    nu, e1, e2, gg = k[NU12], k[E1], k[E2], k[G12]
    eft, efc, emt, emc, esh = k[EFT], k[EFC], k[EMT], k[EMC], k[ESH]
    f1, f2, f11, f22, f66, f12 = k[F1], k[F2], k[F11], k[F22], k[F66], k[F12]
    hk, hq, hq23, hkt, hlin, hkc = k[HK], k[HQ], k[HQ23], k[HKT], k[HLIN], k[HKC]
    f00, f01, f10, f11_ = fq[0, 0], fq[0, 1], fq[1, 0], fq[1, 1]
    for l in range(nl):
        t = w[DT * LANES + l]
        fx = a0 * t + b0 * h
        fy = a1 * t + b1 * h
        exm = w[EM * LANES + l] + zz * w[(EM + 3) * LANES + l]
        eym = w[(EM + 1) * LANES + l] + zz * w[(EM + 4) * LANES + l]
        gxm = w[(EM + 2) * LANES + l] + zz * w[(EM + 5) * LANES + l]
        exf = w[EF * LANES + l] + zz * w[(EF + 3) * LANES + l]
        eyf = w[(EF + 1) * LANES + l] + zz * w[(EF + 4) * LANES + l]
        gxf = w[(EF + 2) * LANES + l] + zz * w[(EF + 5) * LANES + l]
        m1, m2, m6, g1, g2, g6 = ply_stresses(exm, eym, gxm, exf, eyf, gxf, pc, ps, px, q11, q12, q22, q66, fx, fy)
        if face:
            sr, md = limits_v(m1, g1, m2, g2, m6, g6, xt, xc, yt, yc, s12)
            merge_v(sr * inv_fos - 1.0, sr, base + md + 1, 0, l, w)
            sr, md = limits_v((m1 - nu * m2) / e1, (g1 - nu * g2) / e1, m2 / e2 - nu * m1 / e1,
                              g2 / e2 - nu * g1 / e1, m6 / gg, g6 / gg, eft, efc, emt, emc, esh)
            merge_v(sr * inv_fos - 1.0, sr, base + 256 + md + 1, 1, l, w)
            sr, md = tsai_wu_v(m1, m2, m6, g1, g2, g6, f1, f2, f11, f22, f66, f12)
            merge_v(sr * inv_fos - 1.0, sr, base + 768 + md + 1, 2, l, w)
        qx, qy = w[QX * LANES + l], w[QY * LANES + l]
        txz = f00 * qx + f01 * qy
        tyz = f10 * qx + f11_ * qy
        sr, md = hashin_v(m1, m2, m6, ct * txz + st * tyz, -st * txz + ct * tyz, m3, g1, g2, g6,
                          0.0, 0.0, g3, xc, hk, hq, hq23, hkt, hlin, hkc)
        merge_v(sr * inv_fos - 1.0, sr, base + 1280 + md + 1, 3, l, w)


@njit(cache=True, parallel=True, error_model="numpy")
def vector(R, dT, dM, pres, hpres, fos, cphi, sphi, comp, fixed, z, Q, cs, alpha, beta, F, K, faces_only, extra,
           KX, env_ms, env_sr, env_case, env_point, env_crit, env_mode, case_ms, crit_ms):
    """The vectorised reference (arguments: see :func:`run`)."""
    ncase, ncell, n = R.shape[0], R.shape[1], z.shape[0]
    zmax = max(abs(z[0, 0]), abs(z[n - 1, 2]))
    for blk in prange((ncell + LANES - 1) // LANES):
        i0 = blk * LANES
        nl = min(LANES, ncell - i0)
        env = np.full((n, 3 * LANES), INF)
        w = np.full(NROW * LANES, INF)
        em = np.empty(6)
        ef = np.empty(6)
        for j in range(ncase):
            h = dM[j]
            for l in range(nl):
                i = i0 + l
                c, sn = cphi[i], sphi[i]
                r = R[j, i]
                generalised(r, c, sn, c * c, sn * sn, c * sn, comp, fixed, dT[j, i], h, zmax, em, ef)
                for a in range(6):
                    w[(EM + a) * LANES + l] = em[a]
                    w[(EF + a) * LANES + l] = ef[a]
                w[QX * LANES + l] = c * r[6] + sn * r[7]
                w[QY * LANES + l] = -sn * r[6] + c * r[7]
                w[DT * LANES + l] = dT[j, i]
                w[CASE * LANES + l] = INF
            inv_fos = 1.0 / fos[j]
            m3, g3 = -pres[j], -hpres[j]
            for k in range(n):
                w[CUR * LANES:(CUR + 3) * LANES] = env[k]
                ct, st = cs[k, 0], cs[k, 1]
                for q in range(3):
                    lanes_at(w, nl, z[k, q], float((j * 4 + q) * 65536), q != 1 or not faces_only, ct * ct, st * st, ct * st,
                             Q[k, 0], Q[k, 1], Q[k, 2], Q[k, 3], alpha[k, 0], alpha[k, 1], beta[k, 0], beta[k, 1],
                             h, ct, st, F[k, q], K[k], inv_fos, m3, g3)
                env[k] = w[CUR * LANES:(CUR + 3) * LANES]
            for l in range(nl):
                case_ms[i0 + l, j] = w[CASE * LANES + l]
        for l in range(nl):
            i = i0 + l
            for k in range(n):
                env_ms[i, k] = env[k, l]
                env_sr[i, k] = env[k, LANES + l]
                tag = env[k, 2 * LANES + l]
                if tag != INF:
                    g = int(tag)
                    env_case[i, k] = g // 262144
                    env_point[i, k] = g // 65536 % 4
                    env_crit[i, k] = g // 256 % 256
                    env_mode[i, k] = g % 256 - 1
            for s in range(4):
                crit_ms[i, s] = w[(CRIT + s) * LANES + l]


def arrays(tables) -> dict:
    """The section arrays a reference kernel reads, from the product's tables (one section, id 0)."""
    p0, n = int(tables.first[0]), int(tables.nply[0])
    rows = slice(p0, p0 + n)
    return {"comp": tables.compliance[0], "fixed": tables.fixed[0], "z": tables.z[rows], "Q": tables.Q[rows],
            "cs": tables.cs[rows], "alpha": tables.alpha[rows], "beta": tables.beta[rows], "F": tables.F[rows],
            "K": constants(tables.params[rows])}


def extra_constants(extra: int, params: np.ndarray) -> np.ndarray:
    """Per-ply constants of Puck (6) or LaRC03 (7) by the criteria's own ``prepare``; (nply, 16)."""
    from shells.criteria.registry import CRITERIA

    kx = np.zeros((params.shape[0], 16))
    if extra >= 0:
        for row in range(params.shape[0]):
            CRITERIA[extra].prepare(np.ascontiguousarray(params[row]), kx[row])
    return kx


def run(kernel, tables, phi_deg, R, dT, dM, pres, fos, faces_only=False, extra=-1, held_pres=None):
    """Run a reference kernel over every cell and case; returns the envelope as the product names it.

    ``R`` (ncase, ncell, 8) element-frame resultants; ``dT`` (ncase, ncell); ``dM``, ``pres``, ``fos`` (ncase,).
    ``faces_only``: the in-plane criteria at the ply faces only; ``extra``: registry code of Puck (6) or
    LaRC03 (7) evaluated after the default criteria (:func:`plain` only), −1 for none.
    Returns a dict: ``margin``, ``strength_ratio``, ``case``, ``point``, ``criterion``, ``mode`` (ncell, nply),
    ``case_margin`` (ncell, ncase), ``criterion_margin`` (ncell, 5) in the order of :data:`CODES`, then ``extra``.
    """
    a = arrays(tables)
    ncase, ncell = R.shape[:2]
    n = a["z"].shape[0]
    out = {"margin": np.full((ncell, n), INF), "strength_ratio": np.full((ncell, n), INF),
           "case": np.full((ncell, n), -1, np.int32), "point": np.full((ncell, n), -1, np.int8),
           "criterion": np.full((ncell, n), -1, np.int8), "mode": np.full((ncell, n), -1, np.int8),
           "case_margin": np.full((ncell, ncase), INF), "criterion_margin": np.full((ncell, 5), INF)}
    phi = np.radians(np.asarray(phi_deg, dtype=np.float64))
    hp = np.zeros(ncase) if held_pres is None else held_pres
    p0, nply = int(tables.first[0]), int(tables.nply[0])
    kx = extra_constants(extra, tables.params[p0:p0 + nply])
    kernel(R, dT, dM, pres, hp, fos, np.cos(phi), np.sin(phi), a["comp"], a["fixed"], a["z"], a["Q"], a["cs"],
           a["alpha"], a["beta"], a["F"], a["K"], bool(faces_only), int(extra), kx, *out.values())
    return out
