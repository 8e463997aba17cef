"""Through-thickness states of any cell of a store: stored for hot spots, else recovered again from the inputs.

A store keeps the full states (every ply, point and case, the thermal part held apart) of its hot spots and of
each zone's worst cell (``/hotspots``). Any other cell is recovered again, alone, from the run's inputs as the
store records them (paths and SHA-256): the same definition, mesh and resultants give the same state the run
had, by the same code path. An input that moved or changed is refused rather than used.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from shells.errors import StoreError

from bridge.results.store import StoreReader


@dataclass(frozen=True)
class CellStates:
    """States of one cell in every case (arrays cut to the cell's ply count).

    Attributes
    ----------
    mech, fixed : (ncase, nply, 3, 6)
        Mechanical and fixed (thermal, moisture) parts of (σ1, σ2, τ12, τ13, τ23, σ3) at bottom, middle, top.
    z : (nply, 3)
    ratio : dict criterion → (ncase, nply, 3)
        Strength ratios.
    source : str
        ``"stored"`` (from /hotspots) or ``"recovered"`` (from the inputs again).
    """

    mech: np.ndarray
    fixed: np.ndarray
    z: np.ndarray
    ratio: dict
    source: str


def _names(values) -> list[str]:
    return [v.decode() if isinstance(v, bytes) else str(v) for v in values]


def _from_group(group, index: int, nply: int, source: str) -> CellStates:
    names = _names(group["criteria"][()])
    return CellStates(group["mech"][:, index, :nply], group["fixed"][:, index, :nply], group["z"][index, :nply],
                      {n: group["ratio"][j, :, index, :nply] for j, n in enumerate(names)}, source)


def _input_path(st: StoreReader, role: str) -> str:
    """The path of an input as recorded, checked: it exists and has the SHA-256 the run saw."""
    from bridge.recover.run import sha256_of

    entry = st.run.provenance.input(role)
    if entry is None:
        raise StoreError(f"the store records no {role} input; run plybridge recover again", st.path)
    candidates = [Path(entry.resolved)] if entry.resolved else []
    candidates += [Path(entry.path), Path(st.path).parent / Path(entry.path).name]
    found = next((c for c in candidates if c.is_file()), None)
    if found is None:
        raise StoreError(f"the run's {role} {entry.path} is not there any more; restore it, or plot a hot-spot "
                         "cell, or run plybridge recover with --store plies", st.path)
    if sha256_of(found) != entry.sha256:
        raise StoreError(f"the run's {role} {found} has changed since the run (SHA-256 differs); plot a hot-spot "
                         "cell, or run plybridge recover again", st.path)
    return str(found)


def recover_cell(st: StoreReader, cell: int) -> CellStates:
    """Recover one cell again from the run's inputs (every case, the thermal part held apart)."""
    from bridge.recover.field_shear import METHOD as FIELD_METHOD, field_plan
    from bridge.recover.hotspots import states_of_cells
    from bridge.recover.run import case_params, prepare

    roles = sorted((i.role for i in st.run.provenance.inputs if i.role.startswith("resultants")),
                   key=lambda r: int(r[len("resultants"):] or 0))
    defn, model, source, plan, crit = prepare(_input_path(st, "definition"), _input_path(st, "mesh"),
                                              [_input_path(st, r) for r in roles])
    if plan.names != st.case_names or model.n_cells != st.h5["cells/min_margin"].shape[0]:
        raise StoreError("the run's inputs no longer give the store's cells and cases; run plybridge recover "
                         "again", st.path)
    # As the run: each case's environment allowables, the cell's governing turn, the field shear when chosen.
    turn = st.h5["cells/misalignment"][cell:cell + 1] if st.has("cells/misalignment") else None
    field = field_plan(model) if defn.analysis.transverse_shear == FIELD_METHOD else None
    states = states_of_cells(np.array([cell], dtype=np.int64), crit, model.tables(), model, source, plan, field,
                             case_params=case_params(model, plan), turn=turn)
    nply = len(st.run.sections[int(st.h5["model/section"][cell])].plies)
    group = {k: states[k] for k in ("mech", "fixed", "z", "ratio", "criteria")}
    return _from_group(group, 0, nply, "recovered")


def cell_states(st: StoreReader, cell: int) -> CellStates:
    """The states of ``cell``: from /hotspots when stored there, else recovered again from the inputs."""
    nply = len(st.run.sections[int(st.h5["model/section"][cell])].plies)
    if st.has("hotspots/cell"):
        stored = list(st.array("hotspots/cell"))
        if cell in stored:
            return _from_group(st.h5["hotspots"], stored.index(cell), nply, "stored")
    return recover_cell(st, cell)
