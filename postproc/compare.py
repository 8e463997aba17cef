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

Both passes stream: :class:`ScaleAccumulator` gathers the sums of squares block
by block, :class:`MetricAccumulator` the differences against the finished scales
(the per-cell discrepancy, per-ply rows and the coverage of plies and points).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from shells import params as P
from shells.components import MATERIAL_STRAIN, MATERIAL_STRESS
from shells.recovery_reference import ply_states
from shells.recovery_tables import SectionTables
from shells.rotation import shear_rotation, stress_rotation

#: Component suffixes of the last axis: in-plane (1, 2, 12) and transverse shear (13, 23).
COMPONENTS = ("1", "2", "12", "13", "23")
POINTS = ("bottom", "middle", "top")
GROUPS = ((0, 1, 2), (3, 4))
#: Relative floors of the scale: of the ply's component group, and of the group over the model.
PLY_FLOOR, MODEL_FLOOR = 0.01, 1e-9


#: Component names in material axes, by quantity (the names ``[solver_plies] components`` uses).
LABELS = {"stress": MATERIAL_STRESS, "strain": MATERIAL_STRAIN}


def component_label(quantity: str, c: int) -> str:
    """Name of component ``c`` (0 … 4) of a quantity in material axes: ``sigma1`` … ``tau23``, ``eps1`` …"""
    return LABELS[quantity][c]


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

def _sq(a: np.ndarray, axis) -> tuple[np.ndarray, np.ndarray]:
    ok = np.isfinite(a)
    return np.where(ok, a * a, 0.0).sum(axis=axis), ok.sum(axis=axis)


class ScaleAccumulator:
    """Sums of squares of our values per zone, ply and component, block by block (module notes)."""

    def __init__(self, n_zones: int, max_plies: int):
        self.comp = np.zeros((2, n_zones, max_plies, 5))       # sum, count
        self.group = np.zeros((2, n_zones, max_plies, len(GROUPS)))
        self.model = np.zeros((2, len(GROUPS)))

    def add(self, ours: np.ndarray, zone: np.ndarray) -> None:
        """``ours`` (ncase, ncell, maxply, 3, 5) of a block, ``zone`` (ncell,)."""
        for z in np.unique(zone):
            part = ours[:, zone == z]
            self.comp[:, z] += _sq(part, (0, 1, 3))
            for g, idx in enumerate(GROUPS):
                self.group[:, z, :, g] += _sq(part[..., list(idx)], (0, 1, 3, 4))
        for g, idx in enumerate(GROUPS):
            self.model[:, g] += _sq(ours[..., list(idx)], None)

    def merge(self, other: "ScaleAccumulator") -> None:
        """Add the sums of another block's accumulator."""
        self.comp += other.comp
        self.group += other.group
        self.model += other.model

    def result(self) -> np.ndarray:
        """Scales (n_zones, maxply, 5)."""
        def rms(acc):
            return np.sqrt(acc[0] / np.maximum(acc[1], 1))
        comp, group, model = rms(self.comp), rms(self.group), rms(self.model)
        out = np.zeros(comp.shape)
        for g, idx in enumerate(GROUPS):
            out[..., list(idx)] = np.maximum(np.maximum(comp[..., list(idx)], PLY_FLOOR * group[..., g:g + 1]),
                                             MODEL_FLOOR * model[g])
        return np.where(out > 0, out, np.finfo(float).tiny)


def value_scales(ours: np.ndarray, zone: np.ndarray, n_zones: int) -> np.ndarray:
    """Scale of every (zone, ply, component): (n_zones, maxply, 5), see the module notes."""
    acc = ScaleAccumulator(n_zones, ours.shape[2])
    acc.add(ours, np.asarray(zone))
    return acc.result()


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
    """Metrics of one comparison (see :class:`MetricAccumulator`).

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
    covered : bool (nzone, maxply, 3)
        Ply points with at least one value compared.
    """

    tolerance: float
    passed: bool
    compared: int
    cell_discrepancy: np.ndarray
    cell_worst: np.ndarray
    scale: np.ndarray
    rows: tuple
    covered: np.ndarray | None = None

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


class MetricAccumulator:
    """Differences of every ply, point, component, cell and case, block by block, against finished scales.

    Parameters
    ----------
    scale : (n_zones, maxply, 5)
        From :class:`ScaleAccumulator`.
    n_cells : int
    tolerance : float
        Largest relative difference accepted (relative to the value scale).
    quantity : {"stress", "strain"}
        Only names the components in the rows.
    zone_names : sequence of str
    """

    def __init__(self, scale: np.ndarray, n_cells: int, tolerance: float, quantity: str, zone_names):
        self.scale, self.tolerance, self.quantity = scale, float(tolerance), quantity
        self.names = list(zone_names)
        nz, mp = scale.shape[:2]
        self.disc = np.full(n_cells, np.nan)
        self.worst = np.full((n_cells, 4), -1, dtype=np.int64)
        self.count = np.zeros((nz, mp, 5), dtype=np.int64)
        self.within = np.zeros((nz, mp, 5), dtype=np.int64)
        self.max_abs = np.zeros((nz, mp, 5))
        self.max_rel = np.zeros((nz, mp, 5))
        self.covered = np.zeros((nz, mp, 3), dtype=bool)

    def add(self, start: int, ours: np.ndarray, solver: np.ndarray, zone: np.ndarray,
            case_index: np.ndarray | None = None) -> None:
        """A block of cells ``start …``: ``ours``, ``solver`` (ncase, ncell, maxply, 3, 5), ``zone`` (ncell,).

        ``case_index`` maps the block's case axis to the run's case numbers (default: the same).
        """
        rel = relative_difference(ours, solver, self.scale[zone])
        ok = np.isfinite(rel)
        ncase, ncell = rel.shape[:2]
        flat = np.where(ok, rel, -1.0).transpose(1, 0, 2, 3, 4).reshape(ncell, -1)
        arg = flat.argmax(axis=1)
        has = ok.any(axis=(0, 2, 3, 4))
        rows = slice(start, start + ncell)
        self.disc[rows] = np.where(has, flat[np.arange(ncell), arg], np.nan)
        worst = np.stack(np.unravel_index(arg, (ncase,) + rel.shape[2:]), axis=1).astype(np.int64)
        if case_index is not None:
            worst[:, 0] = np.asarray(case_index)[worst[:, 0]]
        worst[~has] = -1
        self.worst[rows] = worst
        absd = np.abs(solver - ours)
        for z in np.unique(zone):
            cz = zone == z
            r, m = rel[:, cz], ok[:, cz]
            self.count[z] += m.sum(axis=(0, 1, 3))
            self.within[z] += (m & (np.where(m, r, np.inf) <= self.tolerance)).sum(axis=(0, 1, 3))
            if m.any():
                self.max_rel[z] = np.maximum(self.max_rel[z], np.where(m, r, 0.0).max(axis=(0, 1, 3)))
                self.max_abs[z] = np.maximum(self.max_abs[z], np.where(m, absd[:, cz], 0.0).max(axis=(0, 1, 3)))
                self.covered[z] |= m.any(axis=(0, 1, 4))

    def merge(self, other: "MetricAccumulator", start: int) -> None:
        """Take in another accumulator that covered the cells ``start …`` of this one."""
        rows = slice(start, start + len(other.disc))
        self.disc[rows], self.worst[rows] = other.disc, other.worst
        self.count += other.count
        self.within += other.within
        np.maximum(self.max_abs, other.max_abs, out=self.max_abs)
        np.maximum(self.max_rel, other.max_rel, out=self.max_rel)
        self.covered |= other.covered

    def result(self) -> Comparison:
        rows = []
        for z, k, c in zip(*np.nonzero(self.count)):
            rows.append({"zone": self.names[z], "ply": int(k) + 1, "component": component_label(self.quantity, c),
                         "count": int(self.count[z, k, c]), "scale": float(self.scale[z, k, c]),
                         "max_abs": float(self.max_abs[z, k, c]), "max_rel": float(self.max_rel[z, k, c]),
                         "within": float(self.within[z, k, c] / self.count[z, k, c])})
        compared = int(self.count.sum())
        passed = bool(compared > 0 and np.nanmax(self.disc) <= self.tolerance)
        return Comparison(self.tolerance, passed, compared, self.disc, self.worst, self.scale, tuple(rows),
                          self.covered)


def compare_values(ours: np.ndarray, solver: np.ndarray, zone: np.ndarray, n_zones: int,
                   tolerance: float, quantity: str = "stress", zone_names=None) -> Comparison:
    """Compare every ply, point, component, cell and case of arrays held whole (one block).

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
    acc = MetricAccumulator(value_scales(ours, zone, n_zones), len(zone), tolerance, quantity, names)
    acc.add(0, ours, solver, zone)
    return acc.result()
