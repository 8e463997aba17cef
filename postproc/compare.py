"""Comparison of a solver's ply stresses or strains with plybridge's own recovery.

Both sides are arrays ``(ncase, ncell, maxply, 3, 5)`` in material axes with the
conventions of docs/conventions.md: points bottom, middle, top of each ply (ply 1
at the bottom) and components (σ1, σ2, τ12, τ13, τ23) — or (ε1, ε2, γ12, γ13, γ23),
engineering shear — NaN where a value is not given (past a cell's ply count, a
point or component the solver does not write).

A difference is made relative to the **scale** of its ply and component: the RMS
of our value of that component over every cell, case and point of that ply in
its zone, floored at 1 % of the RMS of its component group (in-plane or
transverse shear) in that ply and at 1e-9 of the group's RMS over the model, so
that near-zero values never make a difference look large.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from shells import params as P
from shells.recovery_reference import ply_states
from shells.recovery_tables import SectionTables
from shells.rotation import shear_rotation, stress_rotation

#: Component suffixes of the last axis: in-plane (1, 2, 12) and transverse shear (13, 23).
COMPONENTS = ("1", "2", "12", "13", "23")
POINTS = ("bottom", "middle", "top")
GROUPS = ((0, 1, 2), (3, 4))
#: Relative floors of the scale: of the ply's component group, and of the group over the model.
PLY_FLOOR, MODEL_FLOOR = 0.01, 1e-9


def component_label(quantity: str, c: int) -> str:
    """``s12`` / ``e12`` style name of component ``c`` of a quantity."""
    return ("s" if quantity == "stress" else "e") + COMPONENTS[c]


# ----------------------------------------------------------------------------- frames

def element_to_material(values: np.ndarray, angle_deg: np.ndarray, quantity: str) -> np.ndarray:
    """(x, y, xy, xz, yz) in the element frame → (1, 2, 12, 13, 23) of a ply at ``angle_deg``.

    Parameters
    ----------
    values : ndarray (..., 5)
        Stresses, or strains with engineering shear.
    angle_deg : ndarray broadcastable to ``values.shape[:-1]``
        Angle from element x to the ply's 1 axis, counter-clockwise about the normal (θ + φ), degrees.
    quantity : {"stress", "strain"}

    Returns
    -------
    ndarray (..., 5), a new array: σ12 = T(−θ) σxy, ε12 = T(θ)ᵀ εxy, (·13, ·23) = R(θ) (·xz, ·yz).
    """
    return _rotate(values, angle_deg, quantity, inverse=False)


def material_to_element(values: np.ndarray, angle_deg: np.ndarray, quantity: str) -> np.ndarray:
    """The inverse of :func:`element_to_material` (same arguments)."""
    return _rotate(values, angle_deg, quantity, inverse=True)


def _rotate(values, angle_deg, quantity, inverse):
    v = np.asarray(values, dtype=float)
    a = np.broadcast_to(np.asarray(angle_deg, dtype=float), v.shape[:-1])
    sign = -1.0 if inverse else 1.0
    if quantity == "stress":
        plane = stress_rotation(-sign * a)                        # T(∓θ)
    else:
        plane = np.swapaxes(stress_rotation(sign * a), -1, -2)    # T(±θ)ᵀ
    out = np.empty_like(v)
    out[..., :3] = np.einsum("...ij,...j->...i", plane, v[..., :3])
    out[..., 3:] = np.einsum("...ij,...j->...i", shear_rotation(sign * a), v[..., 3:])
    return out


# ----------------------------------------------------------------------------- our side

def reference_values(tables: SectionTables, cell_sec: np.ndarray, phi_deg: np.ndarray, R: np.ndarray,
                     dT: np.ndarray, dM: np.ndarray | None, pres: np.ndarray | None,
                     quantity: str) -> np.ndarray:
    """Our recovery (:func:`shells.recovery_reference.ply_states`) as (ncase, ncell, maxply, 3, 5).

    Stresses are total (mechanical + thermal); strains are total in-plane strains and transverse
    shear strains τ/G (G13, G23 of the ply; NaN where the material gives none).
    """
    st = ply_states(tables, cell_sec, phi_deg, R, dT, dM, pres)
    out = np.empty(st["stress"].shape[:-1] + (5,))
    if quantity == "stress":
        out[..., :3] = st["stress"]
        out[..., 3:] = st["shear"]
        return out
    out[..., :3] = st["strain"]
    G = np.full((len(cell_sec), tables.max_plies, 2), np.nan)
    for s in np.unique(cell_sec):
        rows = tables.first[s] + np.arange(tables.nply[s])
        G[cell_sec == s, :tables.nply[s]] = tables.params[rows][:, [P.G13, P.G23]]
    out[..., 3:] = st["shear"] / G[None, :, :, None, :]
    return out


# ----------------------------------------------------------------------------- metrics

def _rms(a: np.ndarray, axis) -> np.ndarray:
    with np.errstate(invalid="ignore"):
        sq = np.where(np.isfinite(a), a * a, 0.0)
        n = np.isfinite(a).sum(axis=axis)
        return np.sqrt(sq.sum(axis=axis) / np.maximum(n, 1))


def value_scales(ours: np.ndarray, zone: np.ndarray, n_zones: int) -> np.ndarray:
    """Scale of every (zone, ply, component): (n_zones, maxply, 5), see the module notes."""
    mp = ours.shape[2]
    out = np.zeros((n_zones, mp, 5))
    model = np.zeros(5)
    for g in GROUPS:
        model[list(g)] = _rms(ours[..., list(g)], axis=None)
    for z in range(n_zones):
        part = ours[:, zone == z]
        comp = _rms(part, axis=(0, 1, 3))                           # (mp, 5)
        for g in GROUPS:
            grp = _rms(part[..., list(g)], axis=(0, 1, 3, 4))       # (mp,)
            out[z][:, list(g)] = np.maximum(np.maximum(comp[:, list(g)], PLY_FLOOR * grp[:, None]),
                                            MODEL_FLOOR * model[list(g)])
    return np.where(out > 0, out, np.finfo(float).tiny)


def relative_difference(ours: np.ndarray, solver: np.ndarray, scale: np.ndarray) -> np.ndarray:
    """|solver − ours| / scale, NaN where either side has no value; ``scale`` (ncell, maxply, 5)."""
    with np.errstate(invalid="ignore"):
        return np.abs(solver - ours) / scale[None, :, :, None, :]


def max_discrepancy(ours: np.ndarray, solver: np.ndarray, scale: np.ndarray) -> float:
    """Largest relative difference over every value compared (0 when nothing is compared)."""
    rel = relative_difference(ours, solver, scale)
    return float(np.nanmax(rel, initial=0.0)) if np.isfinite(rel).any() else 0.0


@dataclass(frozen=True)
class Comparison:
    """Metrics of one comparison (see :func:`compare_values`).

    Attributes
    ----------
    tolerance : float
        Largest relative difference accepted.
    passed : bool
        Every value compared within tolerance, and at least one value compared.
    compared : int
        Values compared (finite on both sides).
    cell_discrepancy : float64 (ncell,)
        Largest relative difference of each cell (NaN: nothing compared there).
    cell_worst : int64 (ncell, 4)
        Case, ply (0-based), point, component of that difference (−1: nothing compared).
    scale : float64 (nzone, maxply, 5)
    rows : tuple of dict
        Per zone, ply and component with values: ``zone``, ``ply`` (1-based), ``component``, ``count``,
        ``scale``, ``max_abs``, ``max_rel``, ``within`` (fraction of its values within tolerance).
    """

    tolerance: float
    passed: bool
    compared: int
    cell_discrepancy: np.ndarray
    cell_worst: np.ndarray
    scale: np.ndarray
    rows: tuple

    @property
    def fraction_within(self) -> float:
        """Fraction of the compared cells whose every value is within tolerance."""
        d = self.cell_discrepancy[np.isfinite(self.cell_discrepancy)]
        return float(np.mean(d <= self.tolerance)) if d.size else 0.0

    @property
    def max_discrepancy(self) -> float:
        d = self.cell_discrepancy
        return float(np.nanmax(d)) if np.isfinite(d).any() else 0.0

    def worst_cells(self, n: int = 10) -> list[int]:
        d = np.where(np.isfinite(self.cell_discrepancy), self.cell_discrepancy, -np.inf)
        order = np.argsort(-d, kind="stable")[:n]
        return [int(c) for c in order if np.isfinite(self.cell_discrepancy[c])]


def compare_values(ours: np.ndarray, solver: np.ndarray, zone: np.ndarray, n_zones: int,
                   tolerance: float, quantity: str = "stress", zone_names=None) -> Comparison:
    """Compare every ply, point, component, cell and case.

    Parameters
    ----------
    ours, solver : ndarray (ncase, ncell, maxply, 3, 5)
        Material axes, our conventions (module notes); NaN where not given.
    zone : int (ncell,)
        Zone of every cell.
    n_zones : int
    tolerance : float
        Largest relative difference accepted (relative to the value scale).
    quantity : {"stress", "strain"}
        Only names the components in ``rows``.
    zone_names : sequence of str, optional
    """
    zone = np.asarray(zone)
    names = list(zone_names) if zone_names is not None else [f"zone-{z + 1}" for z in range(n_zones)]
    scale = value_scales(ours, zone, n_zones)
    rel = relative_difference(ours, solver, scale[zone])
    absd = np.abs(solver - ours)
    ok = np.isfinite(rel)
    ncase, ncell = rel.shape[:2]
    flat = np.where(ok, rel, -1.0).transpose(1, 0, 2, 3, 4).reshape(ncell, -1)
    arg = flat.argmax(axis=1)
    has = ok.any(axis=(0, 2, 3, 4))
    disc = np.where(has, flat[np.arange(ncell), arg], np.nan)
    worst = np.stack(np.unravel_index(arg, (ncase,) + rel.shape[2:]), axis=1).astype(np.int64)
    worst[~has] = -1
    rows = []
    for z in range(n_zones):
        cz = zone == z
        for k in range(rel.shape[2]):
            for c in range(5):
                r = rel[:, cz, k, :, c]
                m = np.isfinite(r)
                if not m.any():
                    continue
                rows.append({"zone": names[z], "ply": k + 1, "component": component_label(quantity, c),
                             "count": int(m.sum()), "scale": float(scale[z, k, c]),
                             "max_abs": float(np.max(absd[:, cz, k, :, c][m])), "max_rel": float(r[m].max()),
                             "within": float(np.mean(r[m] <= tolerance))})
    compared = int(ok.sum())
    passed = bool(compared > 0 and np.nanmax(disc) <= tolerance)
    return Comparison(float(tolerance), passed, compared, disc, worst, scale, tuple(rows))


def comparison_summary(cmp: Comparison, case_names, zone_of_cell: np.ndarray, zone_names,
                       quantity: str, n_worst: int = 10) -> dict:
    """Plain-data summary of a comparison (verdict, metrics rows, worst cells, per-zone maxima)."""
    worst = []
    for c in cmp.worst_cells(n_worst):
        case, ply, point, comp = (int(v) for v in cmp.cell_worst[c])
        worst.append({"cell": c, "zone": zone_names[zone_of_cell[c]], "discrepancy": float(cmp.cell_discrepancy[c]),
                      "case": case_names[case], "ply": ply + 1, "point": POINTS[point],
                      "component": component_label(quantity, comp)})
    zones = {}
    for z, name in enumerate(zone_names):
        d = cmp.cell_discrepancy[zone_of_cell == z]
        d = d[np.isfinite(d)]
        zones[name] = {"cells": int(d.size), "max_discrepancy": float(d.max()) if d.size else None,
                       "within": float(np.mean(d <= cmp.tolerance)) if d.size else None}
    return {"verdict": "pass" if cmp.passed else "fail", "tolerance": cmp.tolerance, "quantity": quantity,
            "compared_values": cmp.compared, "max_discrepancy": cmp.max_discrepancy,
            "fraction_cells_within": cmp.fraction_within, "zones": zones, "plies": list(cmp.rows),
            "worst_cells": worst}
