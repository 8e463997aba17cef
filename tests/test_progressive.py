"""Progressive failure by ply discount, checked against an independent ply-discount calculation written here.

The independent calculation (``discount`` below) is plain classical lamination theory written out in this file:
the reduced stiffness of Kaw (Mechanics of Composite Materials, 2nd ed., 2006, eq. 2.93), the transformed
stiffness written component by component (Kaw eq. 2.104), [A B; B D] summed ply by ply, a solve with numpy's
least squares (a degraded section may be singular), and the maximum-stress and Tsai-Wu ratios solved along the
load ray by hand (linear and quadratic). It follows the ply-discount rules of docs/criteria.md: the lowest ratio
fails, λ never goes down and every ply overloaded at the current λ after a discount fails at that λ, a matrix
failure keeps ``matrix_retained`` of E2 and G12, a fibre failure (or the fibre
check σ1 vs Xt/Xc of a ply whose matrix has failed) keeps ``fibre_retained`` of every modulus, until every ply
has failed in its fibres or the load cannot be carried. Material: the graphite/epoxy of Kaw (2006), Table 2.1.

No published first-/last-ply example could be re-derived and cited here; the cross-ply last-ply factor is also
checked in closed form (after the 90° plies lose E2 and G12, Nx is carried by the 0° plies: see the test).
"""

from __future__ import annotations

import numpy as np
import pytest

from postproc.progressive import progressive_cells
from postproc.recover import recover_cells
from shells import params as P
from shells.criteria import by_name
from shells.laminate import Laminate, Ply
from shells.materials import Orthotropic
from shells.recovery_tables import build_tables
from shells.section import build_section

# Kaw (2006), Table 2.1, graphite/epoxy: MPa, 1/°C.
E1, E2, G12, NU12 = 181e3, 10.3e3, 7.17e3, 0.28
XT, XC, YT, YC, S = 1500.0, 1500.0, 40.0, 246.0, 68.0
A1, A2 = 0.02e-6, 22.5e-6
T = 0.125


def _ply_material():
    return Orthotropic("kaw", E1=E1, E2=E2, G12=G12, nu12=NU12, Xt=XT, Xc=XC, Yt=YT, Yc=YC, S12=S,
                       alpha1=A1, alpha2=A2).validate()


def _tables(angles):
    m = _ply_material()
    return build_tables([build_section(Laminate("lam", tuple(Ply(m, a, T) for a in angles)))])


# ----------------------------------------------------------------------------- the independent calculation

def _q(e1, e2, g12):
    if e1 == 0.0:
        return np.zeros((3, 3))
    nu21 = NU12 * e2 / e1
    d = 1.0 - NU12 * nu21
    return np.array([[e1 / d, NU12 * e2 / d, 0.0], [NU12 * e2 / d, e2 / d, 0.0], [0.0, 0.0, g12]])


def _qbar(q, deg):
    c, s = np.cos(np.radians(deg)), np.sin(np.radians(deg))
    q11, q12, q22, q66 = q[0, 0], q[0, 1], q[1, 1], q[2, 2]
    b11 = q11 * c ** 4 + q22 * s ** 4 + 2 * (q12 + 2 * q66) * s ** 2 * c ** 2
    b12 = (q11 + q22 - 4 * q66) * s ** 2 * c ** 2 + q12 * (c ** 4 + s ** 4)
    b22 = q11 * s ** 4 + q22 * c ** 4 + 2 * (q12 + 2 * q66) * s ** 2 * c ** 2
    b16 = (q11 - q12 - 2 * q66) * c ** 3 * s - (q22 - q12 - 2 * q66) * s ** 3 * c
    b26 = (q11 - q12 - 2 * q66) * c * s ** 3 - (q22 - q12 - 2 * q66) * c ** 3 * s
    b66 = (q11 + q22 - 2 * q12 - 2 * q66) * s ** 2 * c ** 2 + q66 * (s ** 4 + c ** 4)
    return np.array([[b11, b12, b16], [b12, b22, b26], [b16, b26, b66]])


def _to_material(deg):
    """ε_12 = R T R⁻¹ ε_xy with engineering shear (Kaw eq. 2.100): rows give ε1, ε2, γ12."""
    c, s = np.cos(np.radians(deg)), np.sin(np.radians(deg))
    return np.array([[c * c, s * s, c * s], [s * s, c * c, -c * s], [-2 * c * s, 2 * c * s, c * c - s * s]])


def _max_stress(m, f):
    r = np.inf
    for i, (up, lo) in enumerate(((XT, XC), (YT, YC), (S, S))):
        if f[i] >= up or f[i] <= -lo:
            return 0.0, i
        if m[i] > 0:
            cand = (up - f[i]) / m[i]
        elif m[i] < 0:
            cand = (f[i] + lo) / -m[i]
        else:
            cand = np.inf
        if cand < r:
            r, which = cand, i
    return (r, which) if np.isfinite(r) else (np.inf, -1)


def _tsai_wu(m, f):
    f1, f2, f11, f22, f66 = 1 / XT - 1 / XC, 1 / YT - 1 / YC, 1 / (XT * XC), 1 / (YT * YC), 1 / S ** 2
    f12 = -0.5 * np.sqrt(f11 * f22)

    def crit(s):
        return f1 * s[0] + f2 * s[1] + f11 * s[0] ** 2 + f22 * s[1] ** 2 + f66 * s[2] ** 2 + 2 * f12 * s[0] * s[1]

    c = crit(f) - 1.0
    if c >= 0:
        r = 0.0
    else:   # crit(f + r m) - 1 = a r² + b r + c, with a, b from three samples of the quadratic
        p1, p2 = crit(f + m) - 1.0, crit(f + 2 * m) - 1.0
        a = (p2 - 2 * p1 + c) / 2.0
        b = p1 - c - a
        roots = np.roots([a, b, c]) if a != 0 else np.array([-c / b])
        roots = [x.real for x in roots if abs(x.imag) < 1e-12 and x.real >= 0]
        r = min(roots) if roots else np.inf
    if not np.isfinite(r):
        return np.inf, -1
    s = f + r * m
    terms = [f1 * s[0] + f11 * s[0] ** 2, f2 * s[1] + f22 * s[1] ** 2, f66 * s[2] ** 2]
    return r, (2 if terms[2] >= terms[0] and terms[2] >= terms[1] else 0 if terms[0] >= terms[1] else 1)


def discount(angles, load, criterion, retained=(0.0, 0.0), dT=0.0):
    """(first, last, events) of the ply discount; ``load`` (Nx, Ny, Nxy, Mx, My, Mxy), ``criterion`` a ratio
    function returning (R, which) with which 0 fibre, 1 matrix, 2 shear."""
    n = len(angles)
    z = -n * T / 2 + T * np.arange(n + 1)
    mods = np.array([[E1, E2, G12]] * n)
    status = np.zeros(n, int)
    lam, first, events = 0.0, np.inf, []
    for _ in range(2 * n + 1):
        K = np.zeros((6, 6))
        fixed = np.zeros(6)
        for k, a in enumerate(angles):
            qb = _qbar(_q(*mods[k]), a)
            K[0:3, 0:3] += (z[k + 1] - z[k]) * qb
            K[0:3, 3:6] += (z[k + 1] ** 2 - z[k] ** 2) / 2 * qb
            K[3:6, 3:6] += (z[k + 1] ** 3 - z[k] ** 3) / 3 * qb
            c, s = np.cos(np.radians(a)), np.sin(np.radians(a))
            free = np.array([A1 * c * c + A2 * s * s, A1 * s * s + A2 * c * c, 2 * (A1 - A2) * c * s]) * dT
            fixed[:3] += (z[k + 1] - z[k]) * qb @ free
            fixed[3:] += (z[k + 1] ** 2 - z[k] ** 2) / 2 * qb @ free
        K[3:6, 0:3] = K[0:3, 3:6].T
        rhs = np.stack([load, fixed], axis=1)
        sol, *_ = np.linalg.lstsq(K, rhs, rcond=1e-12)
        if (np.abs(K @ sol - rhs).max(axis=0) > 1e-8 * np.abs(rhs).max(axis=0)).any():
            return first, lam, events                    # the load can no longer be carried
        em, ef = sol[:, 0], sol[:, 1]
        ratios = []
        for k, a in enumerate(angles):
            if status[k] == 2:
                ratios.append((np.inf, -1))
                continue
            q = _q(*mods[k])
            c, s = np.cos(np.radians(a)), np.sin(np.radians(a))
            free_m = np.array([A1, A2, 0.0]) * dT
            best = (np.inf, -1)
            for zz in (z[k], (z[k] + z[k + 1]) / 2, z[k + 1]):
                sm = q @ (_to_material(a) @ (em[:3] + zz * em[3:]))
                sf = q @ (_to_material(a) @ (ef[:3] + zz * ef[3:]) - free_m)
                if status[k] == 0:
                    r = criterion(sm, sf)
                else:                                    # fibre check of a ply whose matrix failed
                    r = _max_stress(np.array([sm[0], 0, 0]), np.array([sf[0], 0, 0]))
                    r = (r[0], 0)
                if r[0] < best[0]:
                    best = r
            ratios.append(best)
        rmin = min(r for r, _ in ratios)
        if not np.isfinite(rmin):
            return first, np.inf, events
        lam = lam if rmin <= lam else rmin        # every ply overloaded at the current load fails at it
        first = min(first, lam)
        for k, (r, which) in enumerate(ratios):
            if r <= lam * (1 + 1e-9):
                if status[k] == 1 or which == 0:
                    status[k] = 2
                    mods[k] *= retained[1]
                else:
                    status[k] = 1
                    mods[k, 1:] *= retained[0]
                events.append((k, status[k], lam))
        if (status == 2).all():
            return first, lam, events
    raise AssertionError("no end")


def _ours(angles, load, criterion, retained=(0.0, 0.0), dT=0.0):
    R = np.zeros((1, 1, 8))
    R[0, 0, :6] = load
    first, last, seq = progressive_cells((by_name(criterion),), _tables(angles), np.zeros(1, np.int64),
                                         np.zeros(1), R, np.full((1, 1), dT), retained=retained, sequence=True)
    events = [(int(e[0]), int(e[3]), e[4]) for e in seq[0, 0] if np.isfinite(e[0])]
    return first[0, 0], last[0, 0], events


CROSS = (0, 90, 90, 0)
QUASI = (0, 45, -45, 90, 90, -45, 45, 0)


@pytest.mark.parametrize("angles, load, criterion, ratio_fn, retained, dT", [
    (CROSS, [100.0, 0, 0, 0, 0, 0], "max-stress", _max_stress, (0.0, 0.0), 0.0),
    (CROSS, [100.0, 0, 0, 0, 0, 0], "tsai-wu", _tsai_wu, (0.0, 0.0), 0.0),
    (QUASI, [100.0, 0, 0, 0, 0, 0], "max-stress", _max_stress, (0.0, 0.0), 0.0),
    (QUASI, [100.0, 0, 0, 0, 0, 0], "tsai-wu", _tsai_wu, (0.1, 0.01), 0.0),
    (QUASI, [100.0, 20.0, 5.0, 2.0, -1.0, 0.5], "max-stress", _max_stress, (0.2, 0.0), -100.0),
    (CROSS, [100.0, 0, 0, 0, 0, 0], "tsai-wu", _tsai_wu, (0.0, 0.0), -100.0),
])
def test_matches_the_independent_ply_discount(angles, load, criterion, ratio_fn, retained, dT):
    want_first, want_last, want_events = discount(angles, np.array(load), ratio_fn, retained, dT)
    first, last, events = _ours(angles, load, criterion, retained, dT)
    np.testing.assert_allclose(first, want_first, rtol=1e-9)
    np.testing.assert_allclose(last, want_last, rtol=1e-9)
    assert [(k, s) for k, s, _ in events] == [(k, s) for k, s, _ in want_events]
    np.testing.assert_allclose([x for *_, x in events], [x for *_, x in want_events], rtol=1e-9)


def cross_ply_factors() -> tuple[float, float]:
    """First- and last-ply load factors per unit Nx of the [0/90]s of Kaw's ply (0.125 mm plies), maximum stress,
    failed moduli set to zero, in closed form.

    First ply: the 90° plies reach Yt in σ2 with the intact section. After their matrix failure they keep only
    E1 along y; the 0° plies then carry σ1 = Q11 εx + Q12 εy with (εx, εy) from A11 = h0 Q11, A12 = h0 Q12,
    A22 = h0 Q22 + h90 E1. Last ply: σ1 = Xt (here that is Nx = Xt·h0 exactly up to the Poisson term).
    """
    Q = _ply_material().Q()
    h0 = h90 = 2 * T
    a11, a12, a22 = Q[0, 0] * h0 + Q[1, 1] * h90, Q[0, 1] * (h0 + h90), Q[1, 1] * h0 + Q[0, 0] * h90
    det = a11 * a22 - a12 ** 2
    ex, ey = a22 / det, -a12 / det                      # strains per unit Nx
    fpf = YT / (Q[0, 1] * ey + Q[1, 1] * ex)            # σ2 of the 90° ply (its 2 axis is x)
    a11, a12, a22 = Q[0, 0] * h0, Q[0, 1] * h0, Q[1, 1] * h0 + E1 * h90
    det = a11 * a22 - a12 ** 2
    ex, ey = a22 / det, -a12 / det
    return fpf, XT / (Q[0, 0] * ex + Q[0, 1] * ey)


def test_cross_ply_in_closed_form():
    # [0/90]s under Nx against the closed form of cross_ply_factors.
    fpf, lpf = cross_ply_factors()
    first, last, events = _ours(CROSS, [1.0, 0, 0, 0, 0, 0], "max-stress")
    np.testing.assert_allclose(first, fpf, rtol=1e-12)
    np.testing.assert_allclose(last, lpf, rtol=1e-12)
    assert [(k, s) for k, s, _ in events] == [(1, 1), (2, 1), (0, 2), (3, 2)]


def test_first_ply_factor_is_the_envelope_ratio_for_in_plane_loads():
    # With no transverse shear or pressure the first failure is the recovery's lowest strength ratio.
    tables = _tables(QUASI)
    rng = np.random.default_rng(3)
    R = rng.normal(size=(3, 5, 8)) * np.array([100, 50, 30, 20, 10, 5, 0, 0.0])
    dT = np.full((3, 5), -80.0)
    crit = (by_name("max-stress"), by_name("tsai-wu"), by_name("hashin"))
    sec, phi = np.zeros(5, np.int64), rng.uniform(-90, 90, 5)
    first, last, _ = progressive_cells(crit, tables, sec, phi, R, dT)
    _, cells, _ = recover_cells(crit, tables, sec, phi, R, dT, np.zeros(3), np.zeros(3), np.ones(3))
    np.testing.assert_allclose(first, cells["case_margin"] + 1.0, rtol=1e-9)
    assert np.all(last >= first)


def test_retained_stiffness_changes_the_last_ply_only():
    a = _ours(QUASI, [100.0, 0, 0, 0, 0, 0], "max-stress", (0.0, 0.0))
    b = _ours(QUASI, [100.0, 0, 0, 0, 0, 0], "max-stress", (0.3, 0.0))
    assert a[0] == b[0] and a[1] != b[1]


@pytest.mark.parametrize("name", ["max-stress", "max-strain", "tsai-wu", "hashin"])
def test_inner_box_is_inside_the_criterion(name):
    # The discount evaluates a criterion only where leaving the box κ·B (B the strength box) could fail a ply:
    # check on random in-plane states and rays that no state fails the criterion before it leaves κ·B.
    from shells.criteria.dispatch import ratio_by_code
    from shells.criteria import code
    from shells.progressive_bounds import criterion_boxes

    crit = by_name(name)
    p = _tables((0,)).params[0]
    kappa = criterion_boxes(p[None], (crit,))[0, 0]
    assert 0.0 < kappa <= 1.0
    box = kappa * np.array([[XT, YT, S], [XC, YC, S]])
    rng = np.random.default_rng(11)
    for _ in range(4000):
        sm = np.zeros(6)
        sf = np.zeros(6)
        sm[:3] = rng.normal(size=3) * np.array([XT, YT, S])
        sf[:3] = rng.uniform(-0.9, 0.9, size=3) * box[0]
        r = ratio_by_code(code(name), sm, sf, p)[0]
        lo = min((box[0, i] - sf[i]) / sm[i] if sm[i] > 0 else (sf[i] + box[1, i]) / -sm[i] for i in range(3))
        assert r >= lo * (1 - 1e-12), (name, sm, sf, r, lo)


@pytest.mark.parametrize("name", ["max-stress", "max-strain", "tsai-wu", "hashin"])
def test_states_in_a_criterion_box_do_not_fail_it(name):
    # The discount leaves a criterion out at a point whose states stay in the criterion's box κ·B up to the
    # step's limit (both ends of the segment inside; the middle point through both faces): the criterion's
    # ratio must then exceed the limit, at the faces and at the middle.
    from shells.criteria import code
    from shells.criteria.dispatch import ratio_by_code
    from shells.progressive_bounds import criterion_balls, criterion_boxes
    from shells.progressive_bounds import gauges
    from shells.progressive_exact import BOUND, box_inside, ruled_out

    crit = by_name(name)
    p = _tables((0,)).params[0]
    kappa = criterion_boxes(p[None], (crit,))[0, 0]
    kball = criterion_balls(p[None], (crit,))[0, 0]
    rng = np.random.default_rng(13)
    scale = np.array([XT, YT, S])
    answered = 0
    for _ in range(3000):
        bm = np.zeros((1, 3, 6))
        bf = np.zeros((1, 3, 6))
        bm[0, ::2, :3] = rng.normal(size=(2, 3)) * scale * rng.uniform(0.01, 1.0)
        bf[0, ::2, :3] = rng.uniform(-0.6, 0.6, size=(2, 3)) * scale * kappa
        bm[0, 1], bf[0, 1] = (bm[0, 0] + bm[0, 2]) / 2, (bf[0, 0] + bf[0, 2]) / 2
        for pt in range(3):
            r = ratio_by_code(code(name), bm[0, pt], bf[0, pt], p)[0]
            for lam in (0.3 * r, 0.9 * r, r, 1.5 * r):
                if np.isfinite(lam) and box_inside(bm, bf, 0, pt, p, kappa, lam):
                    answered += 1
                    assert r > lam, (name, pt, bm[0, pt], bf[0, pt], r, lam)
    assert answered > 1000
    # Without fixed stresses the kernel tests each point by its gauges in the box B and in the ball of normalised
    # stresses, λ·gauge < κ (1 − BOUND), and the whole ply by the middle's (the larger of the faces'): the
    # criterion's ratio must then exceed λ at that point, and at all three points for the middle's gauges.
    inv = 1.0 / p[None, [P.XT, P.XC, P.YT, P.YC, P.S12]]
    zero = np.zeros(6)
    answered = {"box": 0, "ball": 0, "face": 0}
    fg = np.empty((1, 3, 2))
    for _ in range(3000):
        faces = rng.normal(size=(2, 3)) * scale * rng.uniform(0.01, 1.0)
        bm = np.zeros((1, 3, 6))
        bm[0, ::2, :3] = faces
        gauges(bm, 0, inv, 0, fg)
        points = (faces[0], faces.mean(axis=0), faces[1])
        ratios = [ratio_by_code(code(name), np.r_[s, 0.0, 0.0, 0.0], zero, p)[0] for s in points]
        for lam in (0.3, 0.9, 0.99, 1.0, 1.5) * np.array(min(ratios)):
            if ruled_out(lam, fg[0, 1, 0], fg[0, 1, 1], kappa, kball):
                answered["box"] += lam * fg[0, 1, 0] < kappa * (1.0 - BOUND)
                answered["ball"] += lam * fg[0, 1, 1] < kball * (1.0 - BOUND)
                assert min(ratios) > lam, (name, faces, ratios, lam)
        for pt in (0, 2):
            for lam in (0.3, 0.9, 0.99, 1.0, 1.5) * np.array(ratios[pt]):
                if ruled_out(lam, fg[0, pt, 0], fg[0, pt, 1], kappa, kball):
                    answered["face"] += 1
                    assert ratios[pt] > lam, (name, faces, pt, ratios, lam)
    assert min(answered.values()) > 1000, answered


@pytest.mark.parametrize("name", ["max-stress", "max-strain", "tsai-wu", "hashin"])
def test_ball_is_inside_the_criterion(name):
    # κ of the ball of normalised stresses must not exceed the criterion's ratio in any direction of the unit
    # ball (no fixed stresses): checked against the smallest ratio found by sampling 200,000 directions and
    # refining the lowest ones with scipy's Nelder-Mead; and it is close to it (the polytope around the ball
    # costs 0.2 %). Maximum stress and Hashin (its modes are quadratic or linear in the normalised stresses,
    # Yc ≥ 2·S_T here) reach 1 along the axes: closed form.
    from scipy.optimize import minimize

    from shells.criteria import code
    from shells.criteria.dispatch import ratio_by_code
    from shells.progressive_bounds import criterion_balls

    p = _tables((0,)).params[0]
    kball = criterion_balls(p[None], (by_name(name),))[0, 0]
    zero = np.zeros(6)

    def ratio(x):
        d = np.asarray(x) / np.linalg.norm(x)
        sm = np.zeros(6)
        sm[:3] = d * np.where(d > 0, [XT, YT, S], [XC, YC, S])
        return ratio_by_code(code(name), sm, zero, p)[0]

    rng = np.random.default_rng(17)
    d = rng.normal(size=(200000, 3))
    r = np.array([ratio(x) for x in d])
    best = min(minimize(ratio, d[i], method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12}).fun
               for i in np.argsort(r)[:5])
    smallest = min(best, r.min())
    assert kball <= smallest
    assert kball >= 0.995 * smallest
    if name in ("max-stress", "hashin"):
        assert smallest == pytest.approx(1.0, rel=1e-6)


@pytest.mark.parametrize("seed", range(6))
def test_random_stacks_and_cases_match_the_independent_ply_discount(seed):
    # The kernel keeps each ply's section terms and sums them again only after a ply that changed, and checks the
    # criteria through their prepared per-ply forms: on random stacks (unsymmetric too) and several cases of
    # one call (mechanical with moments, thermal, cases one after the other on the same cell), the factors
    # and the failure sequence are those of the independent calculation above.
    rng = np.random.default_rng(100 + seed)
    angles = tuple(rng.choice([0, 30, -30, 45, -45, 60, 90], size=rng.integers(3, 9)).tolist())
    criterion, ratio_fn = (("max-stress", _max_stress), ("tsai-wu", _tsai_wu))[seed % 2]
    retained = ((0.0, 0.0), (0.2, 0.05), (0.5, 0.0))[seed % 3]
    loads = rng.normal(size=(3, 6)) * np.array([100.0, 60.0, 30.0, 5.0, 3.0, 2.0])
    dT = np.array([0.0, -80.0, 40.0])
    R = np.zeros((3, 1, 8))
    R[:, 0, :6] = loads
    first, last, seq = progressive_cells((by_name(criterion),), _tables(angles), np.zeros(1, np.int64),
                                         np.zeros(1), R, dT[:, None], retained=retained, sequence=True)
    for j in range(3):
        want_first, want_last, want_events = discount(angles, loads[j], ratio_fn, retained, dT[j])
        events = [(int(e[0]), int(e[3]), e[4]) for e in seq[j, 0] if np.isfinite(e[0])]
        np.testing.assert_allclose(first[0, j], want_first, rtol=1e-9)
        np.testing.assert_allclose(last[0, j], want_last, rtol=1e-9)
        assert [(k, s) for k, s, _ in events] == [(k, s) for k, s, _ in want_events]
        np.testing.assert_allclose([x for *_, x in events], [x for *_, x in want_events], rtol=1e-9)


def test_prepared_forms_give_the_ratios_of_the_criteria():
    # The exact ratios of the discount go through the criteria's prepared per-ply forms; they must be the bits
    # of the criteria's own ratio, taken here criterion by criterion and point by point (lowest first found).
    import shells.progressive_exact as exact
    from shells.criteria import DEFAULT, code
    from shells.criteria.dispatch import prepare_table, ratio_by_code

    params = _tables(QUASI).params
    codes = np.array([code(n) for n in DEFAULT], np.int64)
    masks = np.ones((len(codes), 3), np.bool_)
    forms, consts = prepare_table(codes, params)
    rng = np.random.default_rng(5)
    bm = np.zeros((8, 3, 6))
    bf = np.zeros((8, 3, 6))
    bm[..., :3] = rng.normal(size=(8, 3, 3)) * np.array([XT, YT, S])
    bf[..., :3] = rng.normal(size=(8, 3, 3)) * np.array([XT, YT, S]) * 0.3
    none = np.zeros((8, len(codes)))               # no box, no ball, gauges that rule nothing out
    results = [[exact.ply_ratios(codes, masks, True, forms, consts, params, none, none, k, bm, bf,
                                 np.full((8, 3, 2), np.inf), k, np.inf, np.inf, -1, -1, np.empty(6), np.empty(6))
                for k in range(8)]]
    own = []
    for k in range(8):
        best = (np.inf, -1, -1)
        for pt in range(3):
            for m, c in enumerate(codes):
                sr, md = ratio_by_code(c, bm[k, pt], bf[k, pt], params[k])
                if sr < best[0]:
                    best = (sr, m, md)
        own.append(best)
    results.append(own)
    assert results[0] == results[1]
    assert all(np.isfinite(r) and c >= 0 for r, c, _ in results[0])


@pytest.mark.parametrize("rank", [6, 5, 3])
def test_degraded_solve_carries_loads_in_the_range_and_refuses_the_others(rank):
    # The section solve (complete pivoting on the diagonally scaled stiffness): for a positive semi-definite K of
    # the given rank, a load in its range is carried (K x = b to round-off, checked against numpy), and a load
    # with a component outside the range is refused (closed form: b = K y + n, n in the null space).
    from shells.degraded import solve_scaled

    rng = np.random.default_rng(rank)
    for _ in range(50):
        V = rng.normal(size=(6, rank)) * rng.uniform(0.1, 10.0, size=rank)
        K = V @ V.T
        carried = K @ rng.normal(size=(6, 2))
        null = np.linalg.svd(K)[0][:, rank:]
        x = np.empty((6, 2))
        work = np.empty((6, 6)), np.empty((6, 2)), np.empty(6), np.empty(6, np.int64)
        assert solve_scaled(K, carried, x, *work)
        np.testing.assert_allclose(K @ x, carried, atol=1e-8 * np.abs(carried).max())
        if rank < 6:
            refused = carried + null[:, :1] * np.abs(carried).max()
            assert not solve_scaled(K, refused, x, *work)
