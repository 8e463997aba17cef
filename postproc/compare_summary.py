"""The plain-data summary of a comparison: verdict, metrics rows, worst cells, per-zone maxima and coverage.

The keys are documented in docs/compare.md (the report renders them).
"""

from __future__ import annotations

import numpy as np

from .compare import POINTS, Comparison, component_label


def coverage(cmp: Comparison, zone_names, zone_plies) -> dict:
    """Plies × points checked of the total, per zone and over the model.

    Parameters
    ----------
    cmp : Comparison
    zone_names : sequence of str
    zone_plies : sequence of int
        Ply count of each zone's laminate (0 for a zone with no cells).

    Returns
    -------
    dict
        ``checked``, ``total`` (ply points), ``fraction``, ``text`` and ``zones``: per zone ``checked``,
        ``total``, ``plies_checked`` (1-based plies with any point compared), ``points`` (``{ply: [point
        names]}`` compared), ``text`` (e.g. "2 of 24 ply points (plies 1, 8)").
    """
    zones, checked, total = {}, 0, 0
    cov = cmp.covered if cmp.covered is not None else np.zeros((len(zone_names), 0, 3), bool)
    for z, (name, n) in enumerate(zip(zone_names, zone_plies)):
        c = cov[z, :n] if n else np.zeros((0, 3), bool)
        plies = [int(k) + 1 for k in np.flatnonzero(c.any(axis=1))]
        got, all_ = int(c.sum()), 3 * int(n)
        text = f"{got} of {all_} ply points" + (f" (plies {', '.join(map(str, plies))})" if plies else "")
        zones[name] = {"checked": got, "total": all_, "plies_checked": plies,
                       "points": {str(k): [POINTS[q] for q in np.flatnonzero(c[k - 1])] for k in plies},
                       "text": text}
        checked, total = checked + got, total + all_
    return {"checked": checked, "total": total, "fraction": checked / total if total else 0.0,
            "text": f"{checked} of {total} ply points checked", "zones": zones}


def comparison_summary(cmp: Comparison, case_names, zone_of_cell: np.ndarray, zone_names,
                       quantity: str, n_worst: int = 10, zone_plies=None) -> dict:
    """Plain-data summary of a comparison (verdict, metrics rows, worst cells, per-zone maxima, coverage)."""
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
    plies = zone_plies if zone_plies is not None else [cmp.scale.shape[1]] * len(zone_names)
    return {"verdict": "pass" if cmp.passed else "fail", "tolerance": cmp.tolerance, "quantity": quantity,
            "compared_values": cmp.compared, "max_discrepancy": cmp.max_discrepancy,
            "fraction_cells_within": cmp.fraction_within, "zones": zones, "plies": list(cmp.rows),
            "worst_cells": worst, "coverage": coverage(cmp, zone_names, plies)}
