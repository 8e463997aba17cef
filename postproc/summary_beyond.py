"""Summary of the analyses beyond the first-ply envelope, accumulated block by block: progressive failure per
zone, the restricted envelopes' worst cells and zone minima, and the cells a misalignment governs.

The block arrays are read by their store paths (``cells/first_ply_factor``, ``envelopes/NAME/min_margin``, ...,
docs/results.md), so a resumed run rebuilds the summary from the blocks already written.
"""

from __future__ import annotations

import numpy as np

from postproc.summary import SummaryAccumulator


def _num(v: float) -> float | None:
    return float(v) if np.isfinite(v) else None


class BeyondAccumulator:
    """Collects the progressive, restricted-envelope and misalignment summaries of a run.

    Parameters
    ----------
    zone_of_cell : int (ncell,)
    n_zones, n_cases : int
    envelopes : sequence of str
        Names of the restricted envelopes.
    hot_spots : int
        Rows kept per restricted envelope (its worst cells).
    """

    def __init__(self, zone_of_cell: np.ndarray, n_zones: int, n_cases: int, envelopes=(), hot_spots: int = 1):
        self.zone = np.asarray(zone_of_cell)
        self.n_zones = n_zones
        # Per zone: lowest first- and last-ply factors and their cells, the range of last/first.
        self.first, self.last, self.ratio_lo = (np.full(n_zones, np.inf) for _ in range(3))
        self.first_cell, self.last_cell = np.full(n_zones, -1), np.full(n_zones, -1)
        self.ratio_hi = np.full(n_zones, -np.inf)
        self.progressive = False
        self.misaligned = 0
        self.restricted = {name: SummaryAccumulator(zone_of_cell, n_zones, n_cases, hot_spots) for name in envelopes}

    def add(self, start: int, stop: int, extra: dict) -> None:
        ids = np.arange(start, stop)
        zones = self.zone[start:stop]
        if "cells/first_ply_factor" in extra:
            self.progressive = True
            first = np.where(np.isnan(extra["cells/first_ply_factor"]), np.inf, extra["cells/first_ply_factor"])
            last = np.where(np.isnan(extra["cells/last_ply_factor"]), np.inf, extra["cells/last_ply_factor"])
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = np.where(np.isfinite(first) & np.isfinite(last) & (first > 0), last / first, np.nan)
            for z in np.unique(zones):
                sel = zones == z
                for arr, best, where in ((first, self.first, self.first_cell), (last, self.last, self.last_cell)):
                    per_cell = arr[sel].min(axis=1)
                    k = int(np.argmin(per_cell))
                    if per_cell[k] < best[z]:
                        best[z], where[z] = per_cell[k], ids[sel][k]
                r = ratio[sel]
                if np.isfinite(r).any():
                    self.ratio_lo[z] = min(self.ratio_lo[z], np.nanmin(r))
                    self.ratio_hi[z] = max(self.ratio_hi[z], np.nanmax(r))
        if "cells/misalignment" in extra:
            rot = extra["cells/misalignment"]
            self.misaligned += int(np.count_nonzero(np.isfinite(rot) & (rot != 0)))
        for name, acc in self.restricted.items():
            prefix = f"envelopes/{name}/"
            cells = {k[len(prefix):]: v for k, v in extra.items() if k.startswith(prefix)}
            cells["flagged"] = np.zeros(stop - start, dtype=bool)
            cells["case_margin"] = np.zeros((stop - start, 0))
            cells["criterion_margin"] = np.zeros((stop - start, 0))
            acc.add(start, stop, {}, cells)

    def result(self, case_names, zone_names) -> dict:
        """``progressive`` (zone → first, first_cell, last, last_cell, ratio_min, ratio_max), ``envelopes``
        (name → worst, zones) and ``misaligned_cells``."""
        out: dict = {"misaligned_cells": self.misaligned}
        if self.progressive:
            out["progressive"] = {
                name: {"first": _num(self.first[z]), "first_cell": int(self.first_cell[z]),
                       "last": _num(self.last[z]), "last_cell": int(self.last_cell[z]),
                       "ratio_min": _num(self.ratio_lo[z]), "ratio_max": _num(self.ratio_hi[z])}
                for z, name in enumerate(zone_names)}
        envelopes = {}
        for name, acc in self.restricted.items():
            res = acc.result(case_names, zone_names, [""] * len(zone_names))
            envelopes[name] = {"worst": res["worst"], "hot_spots": res["hot_spots"],
                               "zones": {z: {"min_margin": v["min_margin"], "cell": v["cell"]}
                                         for z, v in res["zones"].items()}}
        if envelopes:
            out["envelopes"] = envelopes
        return out
