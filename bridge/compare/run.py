"""Orchestration of ``plybridge compare``: recover independently, compare with the solver's ply values, diagnose.

Our side is the plain-numpy recovery (:func:`shells.recovery_reference.ply_states`) of the same resultants
and cases as ``plybridge recover``; the solver's side is read through ``[solver_plies]``
(:mod:`bridge.compare.solver_plies`). Metrics and verdict: :mod:`postproc.compare`; hypotheses:
:mod:`postproc.diagnose`; the output file: docs/compare.md.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from postproc.compare import Comparison, compare_values, comparison_summary, reference_values
from postproc.diagnose import ZoneData, diagnose
from shells.defaults import CAUTION
from shells.errors import InputError

from bridge.atomic import atomic_path
from bridge.definition.loader import Definition, load_definition
from bridge.mesh.formats import read_mesh
from bridge.model.build import Model, build_model
from bridge.definition.cases import combine_steps
from bridge.definition.solver_plies import SolverPlies
from bridge.recover.resultants import ResultantSource
from bridge.recover.run import CasePlan, plan_cases, provenance
from bridge.compare.solver_plies import read_solver_plies

FORMAT = "plybridge-compare"
#: Default largest relative difference accepted (relative to the value scale of the ply and component).
DEFAULT_TOLERANCE = 1e-3


@dataclass(frozen=True)
class CompareInputs:
    """Everything a comparison works on (arrays over the global cell index)."""

    defn: Definition
    model: Model
    plan: CasePlan
    spec: SolverPlies
    twist_sign: int
    R: np.ndarray        # (ncase, ncell, 8), element frame
    dT: np.ndarray       # (ncase, ncell)
    ours: np.ndarray     # (ncase, ncell, maxply, 3, 5)
    solver: np.ndarray   # same


def load_inputs(definition: str, mesh_path: str, resultants: Sequence[str],
                solver_plies: Sequence[str]) -> CompareInputs:
    """Read every input and recover our side (errors are :class:`shells.errors.InputError`)."""
    defn = load_definition(definition)
    model = build_model(defn, read_mesh(mesh_path))
    spec = defn.solver_plies
    source = ResultantSource.of_model(resultants, model)
    plan = plan_cases(defn, model, source.names)
    n = model.n_cells
    R = combine_steps(plan.weights, source.read(0, n))
    dT = plan.delta_T(model, 0, n)
    src = solver_plies[0] if len(solver_plies) == 1 else list(solver_plies)
    solver = read_solver_plies(src, spec, model, plan.names)
    ours = reference_values(model.tables(), model.section, model.phi, R, dT, plan.dM, plan.pres, spec.quantity)
    return CompareInputs(defn, model, plan, spec, defn.resultants.twist_sign, R, dT, ours, solver)


def zone_data(inp: CompareInputs, cmp: Comparison) -> list[ZoneData]:
    """One :class:`ZoneData` per zone with cells (its cells share one section)."""
    m, out = inp.model, []
    for k, zone in enumerate(inp.defn.zones):
        cells = np.flatnonzero(m.zone == k)
        if cells.size == 0:
            continue
        sec = m.sections[int(m.section[cells[0]])]
        n = sec.n_plies
        out.append(ZoneData(zone.name, sec, m.phi[cells], inp.R[:, cells], inp.dT[:, cells], inp.plan.dM,
                            inp.plan.pres, inp.ours[:, cells, :n], inp.solver[:, cells, :n], cmp.scale[k, :n],
                            inp.spec.quantity, inp.spec.axes, inp.plan.names, inp.twist_sign, inp.spec.scale,
                            inp.spec.ply_order, inp.spec.shear))
    return out


def compare_inputs(inp: CompareInputs, tolerance: float) -> tuple[Comparison, dict]:
    """Compare, diagnose a failure, and summarise (plain data, JSON-ready)."""
    names = [z.name for z in inp.defn.zones]
    cmp = compare_values(inp.ours, inp.solver, inp.model.zone, len(names), tolerance, inp.spec.quantity, names)
    summary = comparison_summary(cmp, inp.plan.names, inp.model.zone, names, inp.spec.quantity)
    summary["cases"] = list(inp.plan.names)
    summary["units"] = inp.defn.units.name
    summary["title"] = inp.defn.title
    if cmp.compared == 0:
        summary["note"] = "no value compared: the solver's ply arrays hold no finite value where plies exist"
    summary["diagnosis"] = [] if cmp.passed else diagnose(zone_data(inp, cmp), tolerance)
    return cmp, summary


def write_compare(path: str, summary: dict, cmp: Comparison, model: Model, meta: dict) -> None:
    """The comparison file (HDF5, atomic): cell discrepancy and worst value, metrics, summary JSON."""
    import h5py

    from bridge.results.store import mesh_group

    with atomic_path(path) as tmp, h5py.File(tmp, "w") as h5:
        h5.attrs["format"] = FORMAT
        h5.attrs["layout_version"] = 1
        for key, value in {**meta, "summary": summary, "caution": CAUTION}.items():
            h5.attrs[key] = value if isinstance(value, (str, int, float)) else json.dumps(value)
        cells = h5.create_group("cells")
        cells["discrepancy"] = cmp.cell_discrepancy
        cells["worst"] = cmp.cell_worst
        cells["worst"].attrs["columns"] = "case, ply (0-based), point, component"
        cells["zone"] = model.zone.astype(np.int32)
        h5["scale"] = cmp.scale
        for name, arr in mesh_group(model.mesh.points, model.mesh.blocks).items():
            h5[f"mesh/{name}"] = arr


def write_map(path: str, model: Model, discrepancy: np.ndarray, title: str) -> None:
    """A PNG of the per-cell discrepancy (postproc.render, pyvista offscreen)."""
    from PIL import Image

    from postproc.render import render_field

    img = render_field(model.mesh.points, model.mesh.blocks, discrepancy, kind="sequential", title=title,
                       bar_title="max relative difference")
    with atomic_path(path, suffix=".png") as tmp:
        Image.fromarray(np.asarray(img, dtype=np.uint8)).save(tmp, format="PNG")


def run_compare(definition: str, mesh_path: str, resultants: Sequence[str], solver_plies: Sequence[str],
                output: str, tolerance: float = DEFAULT_TOLERANCE, view: str | None = None,
                map_png: str | None = None, fragment: str | None = None) -> dict:
    """Run a comparison and write its outputs; returns the summary (``verdict`` is ``pass`` or ``fail``)."""
    from postproc.compare_report import compare_section_html

    from bridge.atomic import write_text
    from bridge.mesh.formats import write_mesh

    if not (np.isfinite(tolerance) and tolerance > 0):
        raise InputError(f"--tolerance {tolerance!r}: give a positive relative tolerance, e.g. 1e-3")
    if view and not view.lower().endswith((".vtu", ".xdmf")):
        raise InputError(f"--view {view}: write a .vtu or .xdmf file")
    inp = load_inputs(definition, mesh_path, resultants, solver_plies)
    cmp, summary = compare_inputs(inp, tolerance)
    paths = {"definition": definition, "mesh": mesh_path,
             **{f"resultants{k}": p for k, p in enumerate(resultants)},
             **{f"solver_plies{k}": p for k, p in enumerate(solver_plies)}}
    write_compare(output, summary, cmp, inp.model, {**provenance(paths), "units": inp.defn.units.name})
    if view:
        write_mesh(view, inp.model.mesh, {"discrepancy": cmp.cell_discrepancy, "zone": inp.model.zone,
                                          "worst_ply": cmp.cell_worst[:, 1] + 1})
    if map_png:
        write_map(map_png, inp.model, cmp.cell_discrepancy, f"{inp.defn.title}: solver vs plybridge")
    if fragment:
        write_text(fragment, compare_section_html(summary))
    return summary


def verdict_lines(summary: dict) -> str:
    """The short key<TAB>value verdict printed on stdout (one ``cause`` line per diagnosed zone)."""
    rows = [("verdict", summary["verdict"]), ("max_discrepancy", f"{summary['max_discrepancy']:.3g}"),
            ("tolerance", f"{summary['tolerance']:.3g}"),
            ("cells_within", f"{summary['fraction_cells_within']:.4g}"),
            ("compared_values", summary["compared_values"])]
    for d in summary.get("diagnosis", []):
        top = d["explained"][0] if d["explained"] else None
        rows.append(("cause", f"{d['zone']}\t{top['name']}\t{top['fix']}" if top else f"{d['zone']}\tunexplained"))
    return "".join(f"{k}\t{v}\n" for k, v in rows)
