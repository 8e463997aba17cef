"""The hot spots of a run: which cells, and their full through-thickness states (docs/results.md, /hotspots).

The worst cells of the run and of every zone (and of every restricted envelope) keep every ply's mechanical and
fixed state at its three points in every case, each chosen criterion's strength ratio there and, with the
progressive analysis, the failure sequence of each case. With a misalignment tolerance a cell's states are
those of its governing turn.
"""

from __future__ import annotations

import numpy as np

from bridge.definition.cases import combine_steps


def hot_cells(summary: dict) -> np.ndarray:
    """The hot-spot cells of a run summary and the worst cell of every zone and restricted envelope (sorted)."""
    cells = {h["cell"] for h in summary["hot_spots"]} | {z["cell"] for z in summary["zones"].values()}
    for env in summary.get("envelopes", {}).values():
        cells |= {h["cell"] for h in env.get("hot_spots", ())[:1]}
        cells |= {z["cell"] for z in env.get("zones", {}).values()}
    return np.array(sorted(c for c in cells if c >= 0), dtype=np.int64)


def states_of_cells(ids: np.ndarray, crit, tables, model, source, plan, field=None, beyond=None,
                    case_params=None, turn: np.ndarray | None = None) -> dict:
    """Through-thickness states of a few cells, every case; ``turn`` the governing laminate turn of each
    (degrees, misalignment; NaN or None: nominal)."""
    from postproc.gradients import field_shear
    from postproc.states import cell_states

    if ids.size == 0:
        return {"cell": ids}
    steps = source.read_cells(ids)
    R = combine_steps(plan.weights, steps)
    held = plan.held(steps)

    def per_cell(values):
        return np.stack([values(model, i, i + 1)[:, 0] for i in ids], axis=1)

    dT, dM, pres = per_cell(plan.delta_T), per_cell(plan.delta_M), per_cell(plan.pressure)
    held_pres = None if held is None else per_cell(plan.held_pressure)
    phi = model.phi[ids] + (0.0 if turn is None else np.nan_to_num(turn))
    shear = held_shear = None
    if field is not None:
        g, _, valid = field.gradients(source.read_cells, ids)

        def shear_of(weights, resultants):
            return field_shear(field.G, tables.F, tables.first, tables.nply, tables.max_plies, model.section[ids],
                               phi, combine_steps(weights, g), np.nan_to_num(resultants), valid)

        shear = shear_of(plan.weights, R)
        if held is not None:
            held_shear = shear_of(plan.held_weights, held)
    states = cell_states(crit, tables, model.section[ids], phi, np.nan_to_num(R), dT, dM, pres, shear,
                         None if held is None else np.nan_to_num(held), held_pres, held_shear, case_params)
    extra = {} if held is None else {"held_resultants": held}
    if turn is not None:
        extra["misalignment"] = np.asarray(turn, dtype=np.float64)
    if beyond is not None and beyond.progressive:
        from postproc.progressive import progressive_cells
        from shells.criteria import by_name

        first, last, seq = progressive_cells(tuple(by_name(n) for n in beyond.progressive), tables,
                                             model.section[ids], phi, R, dT, dM, held, beyond.retained, case_params,
                                             sequence=True)
        extra.update({"progressive_sequence": seq, "first_ply_factor": first, "last_ply_factor": last})
    return {"cell": ids, "resultants": R, **extra, "delta_T": dT, **states,
            "criteria": np.array([c.name for c in crit], dtype=object).astype("S")}
