"""Blocks of a comparison: our recovery of a block of cells and its metrics, run by the recovery runners.

A comparison makes two passes over the cells, each a stream of blocks through
:func:`bridge.recover.distributed.open_runner` (serial, or dask workers with ``--workers``): the first sums
the squares of our values (the value scales, :class:`postproc.compare.ScaleAccumulator`), the second compares
each block with the solver's values against those scales (:class:`postproc.compare.MetricAccumulator`).
Memory is that of a few blocks, whatever the model size.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from postproc.compare import MetricAccumulator, ScaleAccumulator, reference_values
from shells.recovery_tables import SectionTables

from bridge.definition.cases import combine_steps
from bridge.recover.resultants import CellAxes, H5Steps


@dataclass(frozen=True)
class CompareSpec:
    """One block: cells ``start … stop − 1`` and their inputs (solver values in pass 2 only)."""

    index: int
    start: int
    stop: int
    section: np.ndarray
    phi: np.ndarray
    zone: np.ndarray
    dT: np.ndarray                       # (ncase, ncell), the compared cases
    steps: np.ndarray | None = None      # (nstep, ncell, 8) unless read through the context's reader
    solver: np.ndarray | None = None     # (ncase, ncell, maxply, 3, 5), material axes
    dM: np.ndarray | None = None         # (ncase, ncell) moisture change per cell (None: the context's per case)
    pres: np.ndarray | None = None       # (ncase, ncell) pressure per cell (None: the context's per case)


@dataclass(frozen=True)
class CompareContext:
    """What every block shares. ``scale`` is None in the first pass (sums of squares), set in the second."""

    tables: SectionTables
    weights: np.ndarray                  # (ncase, nstep), the compared cases
    dM: np.ndarray
    pres: np.ndarray
    quantity: str
    n_zones: int
    reader: H5Steps | None = None
    scale: np.ndarray | None = None
    tolerance: float = 1e-3
    zone_names: tuple = ()

    def ours(self, spec: CompareSpec) -> np.ndarray:
        steps = spec.steps if spec.steps is not None else self.reader.read(slice(spec.start, spec.stop),
                                                                           CellAxes(spec.phi))
        R = combine_steps(self.weights, steps)
        dM = self.dM if spec.dM is None else spec.dM
        pres = self.pres if spec.pres is None else spec.pres
        return reference_values(self.tables, spec.section, spec.phi, R, spec.dT, dM, pres, self.quantity)

    def compute(self, spec: CompareSpec):
        """Pass 1: a :class:`ScaleAccumulator` of the block; pass 2: a :class:`MetricAccumulator` of it."""
        ours = self.ours(spec)
        if self.scale is None:
            acc = ScaleAccumulator(self.n_zones, self.tables.max_plies)
            acc.add(ours, spec.zone)
            return spec.index, acc
        acc = MetricAccumulator(self.scale, spec.stop - spec.start, self.tolerance, self.quantity, self.zone_names)
        acc.add(0, ours, spec.solver, spec.zone)
        return spec.index, acc


def block_cells(n_cases: int, max_plies: int, target_bytes: int = 16 * 2 ** 20) -> int:
    """Cells per comparison block: about ``target_bytes`` for one (ncase, ncell, maxply, 3, 5) array."""
    per_cell = 8 * 15 * max(max_plies, 1) * max(n_cases, 1)
    return int(max(256, min(65536, target_bytes // per_cell)))
