"""Run summary, accumulated block by block: minimum margins overall, per zone,
per case and per criterion, flagged cells, and the hot-spot table (worst cells).
"""

from __future__ import annotations

import numpy as np

from shells.criteria import CRITERIA
from shells.defaults import HOT_SPOTS

POINTS = ("bottom", "middle", "top")


def _finite_min(values: np.ndarray) -> tuple[float, int]:
    """(min, argmin) ignoring NaN; (inf, -1) when nothing is finite or below inf."""
    v = np.where(np.isnan(values), np.inf, values)
    if v.size == 0:
        return np.inf, -1
    k = int(np.argmin(v))
    return float(v[k]), (k if np.isfinite(v[k]) else -1)


class SummaryAccumulator:
    """Collects the summary of a run from its cell blocks (in any order).

    Parameters
    ----------
    zone_of_cell : int (ncell,)
    n_zones, n_cases : int
    hot_spots : int
        Number of worst cells kept.
    """

    def __init__(self, zone_of_cell: np.ndarray, n_zones: int, n_cases: int, hot_spots: int = HOT_SPOTS):
        self.zone = np.asarray(zone_of_cell)
        self.n_hot = hot_spots
        self.zone_min = np.full(n_zones, np.inf)
        self.zone_cell = np.full(n_zones, -1)
        self.case_min = np.full(n_cases, np.inf)
        self.case_cell = np.full(n_cases, -1)
        self.crit_min = np.full(len(CRITERIA), np.inf)
        self.crit_cell = np.full(len(CRITERIA), -1)
        self.flagged: list[int] = []
        self.n_flagged = 0
        self.hot: dict[str, np.ndarray] = {}

    def add(self, start: int, stop: int, envelope: dict, cells: dict) -> None:
        ids = np.arange(start, stop)
        ms = cells["min_margin"]
        zones = self.zone[start:stop]
        for z in np.unique(zones):
            sel = zones == z
            v, k = _finite_min(ms[sel])
            if k >= 0 and v < self.zone_min[z]:
                self.zone_min[z], self.zone_cell[z] = v, ids[sel][k]
        for table, best, where in (("case_margin", self.case_min, self.case_cell),
                                   ("criterion_margin", self.crit_min, self.crit_cell)):
            arr = np.where(np.isnan(cells[table]), np.inf, cells[table])
            if arr.size == 0:
                continue
            k = np.argmin(arr, axis=0)
            v = arr[k, np.arange(arr.shape[1])]
            better = v < best
            best[better] = v[better]
            where[better] = ids[k[better]]
        flagged = ids[cells["flagged"]]
        self.n_flagged += int(flagged.size)
        self.flagged.extend(flagged[: max(0, 20 - len(self.flagged))].tolist())
        self._merge_hot(ids, cells)

    def _merge_hot(self, ids: np.ndarray, cells: dict) -> None:
        keys = ("min_margin", "critical_ply", "strength_ratio", "case", "point", "criterion", "mode")
        block = {"cell": ids, **{k: cells[k] for k in keys}}
        merged = {k: np.concatenate([self.hot[k], block[k]]) if self.hot else block[k] for k in block}
        ms = np.where(np.isfinite(merged["min_margin"]), merged["min_margin"], np.inf)
        order = np.lexsort((merged["cell"], ms))[: self.n_hot]
        order = order[np.isfinite(ms[order])]
        self.hot = {k: v[order] for k, v in merged.items()}

    def result(self, case_names, zone_names, laminate_of_zone) -> dict:
        """A JSON-ready summary."""
        hot = [{
            "cell": int(self.hot["cell"][r]), "min_margin": float(self.hot["min_margin"][r]),
            "ply": int(self.hot["critical_ply"][r]), "strength_ratio": float(self.hot["strength_ratio"][r]),
            "case": case_names[self.hot["case"][r]] if self.hot["case"][r] >= 0 else "",
            "point": POINTS[self.hot["point"][r]] if self.hot["point"][r] >= 0 else "",
            "criterion": CRITERIA[self.hot["criterion"][r]].name if self.hot["criterion"][r] >= 0 else "",
            "mode": (CRITERIA[self.hot["criterion"][r]].modes[self.hot["mode"][r]]
                     if self.hot["criterion"][r] >= 0 and self.hot["mode"][r] >= 0 else ""),
        } for r in range(len(self.hot.get("cell", [])))]
        laminates: dict[str, dict] = {}
        for z, lam in enumerate(laminate_of_zone):
            if self.zone_min[z] < laminates.get(lam, {"min_margin": np.inf})["min_margin"]:
                laminates[lam] = {"min_margin": float(self.zone_min[z]), "cell": int(self.zone_cell[z])}
        return {
            "worst": hot[0] if hot else None,
            "hot_spots": hot,
            "zones": {name: {"laminate": laminate_of_zone[z], "min_margin": _num(self.zone_min[z]),
                             "cell": int(self.zone_cell[z])} for z, name in enumerate(zone_names)},
            "laminates": laminates,
            "cases": {name: {"min_margin": _num(self.case_min[j]), "cell": int(self.case_cell[j])}
                      for j, name in enumerate(case_names)},
            "criteria": {c.name: {"min_margin": _num(self.crit_min[k]), "cell": int(self.crit_cell[k])}
                         for k, c in enumerate(CRITERIA) if self.crit_cell[k] >= 0},
            "flagged_cells": self.n_flagged,
            "flagged_examples": self.flagged,
        }


def _num(v: float) -> float | None:
    """JSON has no inf: margins where no criterion applies are reported as null."""
    return float(v) if np.isfinite(v) else None


def hot_spots_csv(summary: dict) -> str:
    """The hot-spot table as CSV text (cell ids 0-based, plies 1-based)."""
    head = "rank,cell,min_margin,ply,strength_ratio,case,point,criterion,mode"
    rows = [f"{r},{h['cell']},{h['min_margin']:.6g},{h['ply']},{h['strength_ratio']:.6g},"
            f"{_csv(h['case'])},{h['point']},{h['criterion']},{_csv(h['mode'])}"
            for r, h in enumerate(summary["hot_spots"], start=1)]
    return "\n".join([head, *rows]) + "\n"


def _csv(text: str) -> str:
    text = str(text)
    if text[:1] in ("=", "+", "-", "@"):
        text = "'" + text  # never let a spreadsheet read a name as a formula
    if any(ch in text for ch in ',"\n\r'):
        return '"' + text.replace('"', '""') + '"'
    return text
