"""The fused ply-recovery kernel (numba).

For every cell (in parallel) and load case: rotate the resultants from the
element frame into laminate axes, solve the section compliance for the
mid-plane strains and curvatures (mechanical part, and the fixed part from the
thermal and moisture resultants and the resultants of held cases), and at the
bottom, middle and top of every
ply form the material-axis stresses (σ1, σ2, τ12) from classical lamination,
(τ13, τ23) from the equilibrium distribution of Qx, Qy (or a precomputed
transverse shear field), and σ3 = −pressure; then evaluate the chosen failure
criteria and keep, per cell and ply, the lowest margin of safety with its
strength ratio, case, point, criterion and mode. Face-level criteria (sandwich
wrinkling and dimpling) are evaluated once per face on the face's mean stress
and recorded on each of its plies. Stresses are never stored unless asked.

The arguments are the named tuples of :mod:`shells.recovery_args`.
Conventions: docs/conventions.md. Resultants order Nx, Ny, Nxy, Mx, My, Mxy,
Qx, Qy in the element frame; the material angle φ rotates the element frame
onto the laminate axes (counter-clockwise about the normal).
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from .criteria.dispatch import prepare_table, ratio_by_code, ratio_by_form
from .criteria.prepared import SKIP
from .numba_cache import configure
from .recovery_tables import ROUNDOFF

configure()  # again before the kernel is defined (see shells.numba_cache)


@njit(cache=True, inline="always")
def drop_roundoff(e, zmax):
    """Set to zero the mid-plane strains and curvatures ``e`` (6,) that are round-off (in place).

    A component is round-off when the strain it produces through the section (|ε⁰ₐ|, or |κₐ|·zmax) is
    within ROUNDOFF of the largest such strain of the state.
    """
    scale = 0.0
    for a in range(3):
        scale = max(scale, abs(e[a]), abs(e[a + 3]) * zmax)
    tol = ROUNDOFF * scale
    for a in range(3):
        if abs(e[a]) <= tol:
            e[a] = 0.0
        if abs(e[a + 3]) * zmax <= tol:
            e[a + 3] = 0.0


@njit(cache=True, inline="always")
def transverse_shear(use_field, field, j, i, k, q, F, row, qx, qy, ct, st, out):
    """(τ13, τ23) into ``out[3]``, ``out[4]``: from the field when ``use_field``, else F·(Qx, Qy) (laminate axes),
    rotated into the ply's material axes."""
    if use_field:
        txz = field[j, i, k, q, 0]
        tyz = field[j, i, k, q, 1]
    else:
        txz = F[row, q, 0, 0] * qx + F[row, q, 0, 1] * qy
        tyz = F[row, q, 1, 0] * qx + F[row, q, 1, 1] * qy
    out[3] = ct * txz + st * tyz
    out[4] = -st * txz + ct * tyz


@njit(cache=True)
def face_mean_stress(em, ef, row0, n, z, Q, cs, alpha, beta, t, h, sm, sf):
    """Mean in-plane stress of a sandwich face, mechanical ``sm`` and fixed ``sf`` (written in place).

    The face resultant over the face thickness, in LAMINATE axes (σx, σy, τxy in slots 0, 1, 2; the others
    zero): the stress is linear through each ply, so its mean over a ply is the value at the ply's middle.
    """
    for a in range(6):
        sm[a] = 0.0
        sf[a] = 0.0
    total = 0.0
    for row in range(row0, row0 + n):
        zz = z[row, 1]
        w = z[row, 2] - z[row, 0]
        total += w
        c, s = cs[row, 0], cs[row, 1]
        cc, ss, cx = c * c, s * s, c * s
        for part in range(2):
            e = em if part == 0 else ef
            ex, ey, gxy = e[0] + zz * e[3], e[1] + zz * e[4], e[2] + zz * e[5]
            e1 = cc * ex + ss * ey + cx * gxy
            e2 = ss * ex + cc * ey - cx * gxy
            g12 = -2.0 * cx * ex + 2.0 * cx * ey + (cc - ss) * gxy
            if part == 1:
                e1 -= alpha[row, 0] * t + beta[row, 0] * h
                e2 -= alpha[row, 1] * t + beta[row, 1] * h
            s1 = Q[row, 0] * e1 + Q[row, 1] * e2
            s2 = Q[row, 1] * e1 + Q[row, 2] * e2
            s6 = Q[row, 3] * g12
            # Material → laminate axes: σ_xy = T(θ) σ_12.
            out = sm if part == 0 else sf
            out[0] += w * (cc * s1 + ss * s2 - 2.0 * cx * s6)
            out[1] += w * (ss * s1 + cc * s2 + 2.0 * cx * s6)
            out[2] += w * (cx * s1 - cx * s2 + (cc - ss) * s6)
    for a in range(3):
        sm[a] /= total
        sf[a] /= total


@njit(cache=True, parallel=True)
def recover_block(sel, sec, blk, env, out):
    """Recover plies of a block of cells × cases and merge into the envelope (in place).

    Parameters
    ----------
    sel : Selection
        Criterion codes and point masks.
    sec : SectionArrays
        Section and ply tables.
    blk : BlockInputs
        Resultants, temperature and moisture changes, pressure, factor of safety,
        skipped cell-cases, section id and material angle per cell, the optional
        transverse shear field (``blk.shear``, zero-size when unused) and the
        global index of the block's first case.
    env : Envelope
        Rows of the block's cells; updated where a lower margin is found.
    out : PlyStates
        Filled when non-empty: (σ1, σ2, τ12), (ε1, ε2, γ12) and (τ13, τ23) in material axes.
    """
    # Every array is taken out of its tuple before the parallel loop: inside a prange, numba drops
    # writes made through a named tuple's field (numba issues 5872 and 7135).
    R, dT, dM, pressure, fos, skip = blk.resultants, blk.delta_T, blk.delta_M, blk.pressure, blk.fos, blk.skip
    cell_sec, cell_cos, cell_sin, field_shear, case0 = blk.section, blk.cos_phi, blk.sin_phi, blk.shear, blk.case0
    held_R, held_pres, held_shear = blk.held_resultants, blk.held_pressure, blk.held_shear
    codes, masks, face_codes = sel.codes, sel.masks, sel.face_codes
    face_first, face_count, face_rows, face_params = sec.face_first, sec.face_count, sec.face_rows, sec.face_params
    comp, fixed, first, nply, z, Q, cs = sec.compliance, sec.fixed, sec.first, sec.nply, sec.z, sec.Q, sec.cs
    alpha, beta, F, params = sec.alpha, sec.beta, sec.F, sec.params
    env_ms, env_sr, env_case, env_point = env.margin, env.strength_ratio, env.case, env.point
    env_crit, env_mode, case_ms, crit_ms = env.criterion, env.mode, env.case_margin, env.criterion_margin
    out_stress, out_strain, out_shear = out.stress, out.strain, out.shear
    ncase = R.shape[0]
    ncell = R.shape[1]
    store = out_stress.size > 0
    field = field_shear.size > 0
    held = held_R.size > 0
    held_field = held_shear.size > 0
    forms, consts = prepare_table(codes, params)   # each criterion's constants on each ply, computed once
    for i in prange(ncell):
        sm = np.empty(6)
        sf = np.empty(6)
        gm = np.empty(6)
        gf = np.empty(6)
        em = np.empty(6)
        ef = np.empty(6)
        s = cell_sec[i]
        c = cell_cos[i]
        sn = cell_sin[i]
        cc, ss, cx = c * c, sn * sn, c * sn
        p0 = first[s]
        n = nply[s]
        zmax = max(abs(z[p0, 0]), abs(z[p0 + n - 1, 2]))
        for j in range(ncase):
            if skip[j, i]:
                continue
            r = R[j, i]
            # Element frame → laminate axes: v_lam = T(−φ) v_el for N and M; R(φ) for Q.
            for o in (0, 3):
                gm[o] = cc * r[o] + ss * r[o + 1] + 2.0 * cx * r[o + 2]
                gm[o + 1] = ss * r[o] + cc * r[o + 1] - 2.0 * cx * r[o + 2]
                gm[o + 2] = -cx * r[o] + cx * r[o + 1] + (cc - ss) * r[o + 2]
            qx = c * r[6] + sn * r[7]
            qy = -sn * r[6] + c * r[7]
            t = dT[j, i]
            h = dM[j, i]
            for a in range(3):
                gf[a] = fixed[s, 0, a] * t + fixed[s, 2, a] * h
                gf[a + 3] = fixed[s, 1, a] * t + fixed[s, 3, a] * h
            qxh = 0.0
            qyh = 0.0
            if held:                      # held cases: their resultants join the fixed part
                rh = held_R[j, i]
                for o in (0, 3):
                    gf[o] += cc * rh[o] + ss * rh[o + 1] + 2.0 * cx * rh[o + 2]
                    gf[o + 1] += ss * rh[o] + cc * rh[o + 1] - 2.0 * cx * rh[o + 2]
                    gf[o + 2] += -cx * rh[o] + cx * rh[o + 1] + (cc - ss) * rh[o + 2]
                qxh = c * rh[6] + sn * rh[7]
                qyh = -sn * rh[6] + c * rh[7]
            for a in range(6):
                am = 0.0
                af = 0.0
                for b in range(6):
                    am += comp[s, a, b] * gm[b]
                    af += comp[s, a, b] * gf[b]
                em[a] = am
                ef[a] = af
            drop_roundoff(em, zmax)
            drop_roundoff(ef, zmax)
            inv_fos = 1.0 / fos[j]
            pres = pressure[j, i]
            pres_held = held_pres[j, i]
            cj = case0 + j
            if face_codes.shape[0] > 0:
                for f in range(face_first[s], face_first[s] + face_count[s]):
                    face_mean_stress(em, ef, face_rows[f, 0], face_rows[f, 1], z, Q, cs, alpha, beta, t, h, sm, sf)
                    for m in range(face_codes.shape[0]):
                        cm = face_codes[m]
                        sr, mode = ratio_by_code(cm, sm, sf, face_params[f])
                        ms = sr * inv_fos - 1.0
                        if ms < case_ms[i, cj]:
                            case_ms[i, cj] = ms
                        if ms < crit_ms[i, cm]:
                            crit_ms[i, cm] = ms
                        for k in range(face_rows[f, 0] - p0, face_rows[f, 0] - p0 + face_rows[f, 1]):
                            if ms < env_ms[i, k]:
                                env_ms[i, k] = ms
                                env_sr[i, k] = sr
                                env_case[i, k] = cj
                                env_point[i, k] = 1
                                env_crit[i, k] = cm
                                env_mode[i, k] = mode
            for k in range(n):
                row = p0 + k
                ct, st = cs[row, 0], cs[row, 1]
                pc, ps, px = ct * ct, st * st, ct * st
                q11, q12, q22, q66 = Q[row, 0], Q[row, 1], Q[row, 2], Q[row, 3]
                fx = alpha[row, 0] * t + beta[row, 0] * h
                fy = alpha[row, 1] * t + beta[row, 1] * h
                pr = params[row]
                fr = forms[row]
                cr = consts[row]
                for q in range(3):
                    zz = z[row, q]
                    exm = em[0] + zz * em[3]
                    eym = em[1] + zz * em[4]
                    gxm = em[2] + zz * em[5]
                    exf = ef[0] + zz * ef[3]
                    eyf = ef[1] + zz * ef[4]
                    gxf = ef[2] + zz * ef[5]
                    # Laminate → material axes: ε_12 = T(θ)ᵀ ε_xy.
                    e1m = pc * exm + ps * eym + px * gxm
                    e2m = ps * exm + pc * eym - px * gxm
                    g12m = -2.0 * px * exm + 2.0 * px * eym + (pc - ps) * gxm
                    e1f = pc * exf + ps * eyf + px * gxf
                    e2f = ps * exf + pc * eyf - px * gxf
                    g12f = -2.0 * px * exf + 2.0 * px * eyf + (pc - ps) * gxf
                    sm[0] = q11 * e1m + q12 * e2m
                    sm[1] = q12 * e1m + q22 * e2m
                    sm[2] = q66 * g12m
                    transverse_shear(field, field_shear, j, i, k, q, F, row, qx, qy, ct, st, sm)
                    sm[5] = -pres
                    sf[0] = q11 * (e1f - fx) + q12 * (e2f - fy)
                    sf[1] = q12 * (e1f - fx) + q22 * (e2f - fy)
                    sf[2] = q66 * g12f
                    if held:
                        transverse_shear(held_field, held_shear, j, i, k, q, F, row, qxh, qyh, ct, st, sf)
                    else:
                        sf[3] = 0.0
                        sf[4] = 0.0
                    sf[5] = -pres_held
                    if store:
                        for a in range(3):
                            out_stress[j, i, k, q, a] = sm[a] + sf[a]
                        out_strain[j, i, k, q, 0] = e1m + e1f
                        out_strain[j, i, k, q, 1] = e2m + e2f
                        out_strain[j, i, k, q, 2] = g12m + g12f
                        out_shear[j, i, k, q, 0] = sm[3] + sf[3]
                        out_shear[j, i, k, q, 1] = sm[4] + sf[4]
                    # Criteria; the envelope update is written out here (a call taking the envelope
                    # arrays would reference-count eight arrays per point).
                    for m in range(codes.shape[0]):
                        if not masks[m, q]:
                            continue
                        form = fr[m]
                        if form == SKIP:          # not applicable to this ply: R = inf, nothing to record
                            continue
                        cm = codes[m]
                        sr, mode = ratio_by_form(form, cm, sm, sf, cr, m, pr)
                        ms = sr * inv_fos - 1.0
                        if ms < case_ms[i, cj]:
                            case_ms[i, cj] = ms
                        if ms < crit_ms[i, cm]:
                            crit_ms[i, cm] = ms
                        if ms < env_ms[i, k]:
                            env_ms[i, k] = ms
                            env_sr[i, k] = sr
                            env_case[i, k] = cj
                            env_point[i, k] = q
                            env_crit[i, k] = cm
                            env_mode[i, k] = mode
