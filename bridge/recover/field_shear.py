"""Transverse shear from the moment field (``[analysis] transverse_shear = "field"``) in a recovery run.

Once per run: the gradient stencils of every cell (edge neighbours in the same zone, :mod:`postproc.gradients`)
and the gradient-to-shear matrix of every ply row (:mod:`shells.field_shear`). Per block, in the driver: the
block's cells and their neighbours are read, the gradients of every input step fitted (they are linear in the
resultants, so cases combine them like the resultants), and the input Qx, Qy compared with the Q of the fitted
field per zone. In the block task: τ at every ply point from the case gradients (the Q-only distribution where a
cell has no stencil), handed to the kernel in place of F·(Qx, Qy).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from postproc.gradients import Stencil, build_stencil, edge_neighbours, fit_gradients
from shells.field_shear import gradient_shear_matrix, shear_force

#: Value of ``[analysis] transverse_shear`` that selects this method.
METHOD = "field"


@dataclass(frozen=True)
class FieldPlan:
    """Stencils of every cell and the matrices G of every ply row (rows as in the run's section tables)."""

    stencil: Stencil
    G: np.ndarray

    def block_gradients(self, read_cells, start: int, stop: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Gradients (nstep, n, 12) and input Q (nstep, n, 2) of cells start … stop − 1, laminate axes, and the
        cells with a stencil (n,). ``read_cells(ids)`` gives the input steps of increasing cell ids."""
        return self.gradients(read_cells, np.arange(start, stop))

    def gradients(self, read_cells, cells: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """As :meth:`block_gradients` for any cell ids."""
        cells = np.asarray(cells, dtype=np.int64)
        ids = self.stencil.halo(cells)
        steps = np.nan_to_num(read_cells(ids))
        g, q = fit_gradients(self.stencil, cells, ids, steps)
        return g, q, self.stencil.valid[cells]


def field_plan(model) -> FieldPlan:
    """The plan of a model (:class:`bridge.model.build.Model`): stencils from its mesh, zones and frames."""
    mesh = model.mesh
    nb = edge_neighbours(mesh.corners(), model.zone)
    stencil = build_stencil(nb, mesh.centroids(), model.frame_x, model.frame_y, model.phi)
    G = np.concatenate([gradient_shear_matrix(s.props)[[k for k, _ in s.rows]] for s in model.sections])
    return FieldPlan(stencil, np.ascontiguousarray(G))


class ShearCheck:
    """Per zone: how far the input (Qx, Qy) is from the Q of the fitted moment field, over cells and cases.

    ``mean`` is Σ|Q_field − Q_input| / Σ|Q_input| and ``max`` is max|Q_field − Q_input| / max|Q_input| (vector
    norms, cells with a stencil); ``fallback`` counts the cells that used the Q-only method.
    """

    def __init__(self, zone_of_cell: np.ndarray, n_zones: int):
        self.zone = np.asarray(zone_of_cell)
        self.sums = np.zeros((n_zones, 2))
        self.peaks = np.zeros((n_zones, 2))
        self.fallback = np.zeros(n_zones, np.int64)

    def add(self, start: int, stop: int, weights: np.ndarray, g: np.ndarray, q: np.ndarray,
            valid: np.ndarray) -> None:
        from bridge.definition.cases import combine_steps

        zone = self.zone[start:stop]
        diff = np.linalg.norm(combine_steps(weights, shear_force(g)) - combine_steps(weights, q), axis=-1)
        size = np.linalg.norm(combine_steps(weights, q), axis=-1)
        for z in np.unique(zone):
            sel = (zone == z) & valid
            self.fallback[z] += int(np.count_nonzero((zone == z) & ~valid))
            if sel.any():
                d, s = diff[:, sel], size[:, sel]
                self.sums[z] += (d.sum(), s.sum())
                self.peaks[z] = np.maximum(self.peaks[z], (d.max(), s.max()))

    def result(self, zone_names) -> dict:
        def ratio(a: float, b: float):
            return float(a / b) if b > 0 else None

        return {"method": METHOD, "zones": {
            name: {"mean": ratio(*self.sums[z]), "max": ratio(*self.peaks[z]), "fallback_cells": int(self.fallback[z])}
            for z, name in enumerate(zone_names)}}


def check_note(result: dict) -> list[str]:
    """One line: the worst zone's consistency and the cells that fell back to the Q-only method."""
    zones = {k: v for k, v in result["zones"].items() if v["max"] is not None}
    fallback = sum(v["fallback_cells"] for v in result["zones"].values())
    parts = []
    if zones:
        name = max(zones, key=lambda k: zones[k]["max"])
        z = zones[name]
        parts.append(f"transverse shear from the moment field: input Q against the field's Q differs by "
                     f"{100 * z['mean']:.2g} % on average and {100 * z['max']:.2g} % at most (zone '{name}', "
                     "the largest)")
    if fallback:
        parts.append(f"{fallback} cell(s) without a gradient stencil (fewer than two neighbours in their zone) "
                     "used the Q-only method")
    return ["; ".join(parts)] if parts else []
