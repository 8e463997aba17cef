"""Orchestration of ``plybridge compare``: recover independently, compare with the solver's ply values, diagnose.

Our side is the plain-numpy recovery (:func:`shells.recovery_reference.ply_states`) of the same resultants
and cases as ``plybridge recover``; the solver's side is read through ``[solver_plies]``
(:mod:`bridge.compare.solver_plies`). Metrics and verdict: :mod:`postproc.compare`; hypotheses:
:mod:`postproc.diagnose`; the output file: docs/compare.md.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from postproc.compare import Comparison, MetricAccumulator, ScaleAccumulator, reference_values
from postproc.compare_summary import comparison_summary
from postproc.diagnose import ZoneData, diagnose
from shells.defaults import CAUTION
from shells.errors import DefinitionError, InputError, ResultantsError
from shells.recovery_tables import build_tables

from bridge.atomic import atomic_h5, atomic_path
from bridge.definition.loader import Definition, load_definition
from bridge.mesh.formats import read_mesh
from bridge.model.build import Model, build_model
from bridge.compare.blocks import CompareContext, CompareSpec, block_cells as blocks_of
from bridge.compare.solver_plies import SolverPlySource, axes_angle
from bridge.definition.cases import combine_steps
from bridge.definition.solver_plies import SolverPlies
from bridge.recover.files import WHOLE_READ_MARK
from bridge.recover.resultants import ResultantSource
from bridge.recover.run import CasePlan, plan_cases, provenance

FORMAT = "plybridge-compare"
#: Larger metadata values (JSON text) are written as datasets /meta/KEY instead of root attributes.
MAX_ATTRIBUTE_BYTES = 32 * 1024
#: Default largest relative difference accepted (relative to the value scale of the ply and component).
DEFAULT_TOLERANCE = 1e-3


#: Cells per zone the diagnosis works on: the worst ones and an even spread of the rest.
DIAGNOSIS_CELLS = 256

Progress = Callable[[str, int, int], None]
Note = Callable[[str], None]


@dataclass(frozen=True)
class CompareInputs:
    """Everything a comparison reads (arrays over the global cell index stay in their sources)."""

    defn: Definition
    model: Model
    plan: CasePlan
    spec: SolverPlies
    source: ResultantSource
    solver: SolverPlySource
    cases: tuple[int, ...]       # the run's cases compared (those the solver gives), in run order
    skipped: tuple[str, ...]     # combinations the solver does not give

    @property
    def case_names(self) -> tuple[str, ...]:
        return tuple(self.plan.names[j] for j in self.cases)

    def zone_plies(self) -> list[int]:
        m = self.model
        out = []
        for k in range(len(self.defn.zones)):
            cells = np.flatnonzero(m.zone == k)
            out.append(m.sections[int(m.section[cells[0]])].n_plies if cells.size else 0)
        return out


def load_inputs(definition: str, mesh_path: str, resultants: Sequence[str],
                solver_plies: Sequence[str]) -> CompareInputs:
    """Open every input once (errors are :class:`shells.errors.InputError`); values are read by blocks later."""
    defn = load_definition(definition)
    model = build_model(defn, read_mesh(mesh_path))
    wound = [n for n, s in zip(model.section_names, model.sections) if s.n_rows != s.n_plies]
    if wound:
        raise DefinitionError(f"laminate '{wound[0]}' has a wound ±angle ply, which a solver gives as one layer and "
                              "plybridge as its two fibre directions; compare does not match them: compare "
                              "laminates without wound plies", defn.source)
    source = ResultantSource.of_model(list(resultants), model)
    plan = plan_cases(defn, model, source.names)
    solver = SolverPlySource(list(solver_plies), model, plan.names)
    combos = set(defn.cases.combinations)
    missing = [c for j, c in enumerate(plan.names) if j not in solver.case_index]
    base = [c for c in missing if c not in combos]
    if base:
        raise ResultantsError(f"no solver ply values for case(s) {base}; the files have {list(solver.file_cases)}. "
                              "Name the ply arrays' cases as the load cases", solver.files.label)
    return CompareInputs(defn, model, plan, defn.solver_plies, source, solver, solver.case_index, tuple(missing))


def _context(inp: CompareInputs, scale=None, tolerance: float = 1e-3) -> CompareContext:
    j = list(inp.cases)
    return CompareContext(inp.model.tables(), inp.plan.total_weights[j], inp.plan.dM[j], inp.plan.pres[j],
                          inp.spec.quantity, len(inp.defn.zones), inp.source.reader, scale, tolerance,
                          tuple(z.name for z in inp.defn.zones))


def _specs(inp: CompareInputs, step: int, with_solver: bool):
    m, j = inp.model, list(inp.cases)
    for index, start in enumerate(range(0, m.n_cells, step)):
        stop = min(m.n_cells, start + step)
        cells = slice(start, stop)
        yield CompareSpec(index, start, stop, m.section[cells], m.phi[cells], m.zone[cells],
                          inp.plan.delta_T(m, start, stop)[j], inp.source.block_steps(start, stop),
                          inp.solver.read_cells(cells).material if with_solver else None,
                          inp.plan.delta_M(m, start, stop)[j], _total_pressure(inp.plan, m, start, stop)[j])


def _total_pressure(plan, model, start: int, stop: int) -> np.ndarray:
    """(ncase, ncell) lateral pressure of the scaled and held parts together (totals are compared)."""
    held = plan.held_pressure(model, start, stop)
    return plan.pressure(model, start, stop) + (0.0 if held is None else held)


def measure(inp: CompareInputs, tolerance: float, runner, progress: Progress | None = None,
            block_cells: int | None = None) -> Comparison:
    """The two streamed passes (value scales, then differences) over every block of cells."""
    n = inp.model.n_cells
    step = block_cells or blocks_of(len(inp.cases), inp.model.tables().max_plies)
    scales = ScaleAccumulator(len(inp.defn.zones), inp.model.tables().max_plies)
    for index, acc in runner.map(_context(inp), _specs(inp, step, False)):
        scales.merge(acc)
        if progress:
            progress("scales", min(n, (index + 1) * step), n)
    ctx = _context(inp, scales.result(), tolerance)
    metrics = MetricAccumulator(ctx.scale, n, tolerance, inp.spec.quantity, ctx.zone_names)
    for index, acc in runner.map(ctx, _specs(inp, step, True)):
        metrics.merge(acc, index * step)
        if progress:
            progress("compare", min(n, (index + 1) * step), n)
    return metrics.result()


def diagnosis_cells(cmp: Comparison, cells: np.ndarray, k: int = DIAGNOSIS_CELLS) -> np.ndarray:
    """Up to ``k`` of a zone's cells, increasing: its worst half and an even spread of the others."""
    if cells.size <= k:
        return cells
    d = np.where(np.isfinite(cmp.cell_discrepancy[cells]), cmp.cell_discrepancy[cells], -np.inf)
    worst = cells[np.argsort(-d, kind="stable")[:k // 2]]
    spread = cells[np.linspace(0, cells.size - 1, k - worst.size).astype(np.int64)]
    return np.unique(np.concatenate([worst, spread]))


def zone_data(inp: CompareInputs, cmp: Comparison, zones=None) -> list[ZoneData]:
    """One :class:`ZoneData` per zone with cells (its cells share one section), on a sample of its cells."""
    m, out = inp.model, []
    j = list(inp.cases)
    for k, zone in enumerate(inp.defn.zones):
        all_cells = np.flatnonzero(m.zone == k)
        if all_cells.size == 0 or (zones is not None and zone.name not in zones):
            continue
        cells = diagnosis_cells(cmp, all_cells)
        sec = m.sections[int(m.section[cells[0]])]
        n = sec.n_plies
        R = combine_steps(inp.plan.total_weights[j], inp.source.read_cells(cells))   # held cases included
        dT = np.stack([inp.plan.delta_T(m, c, c + 1)[j, 0] for c in cells], axis=1)
        dM = np.stack([inp.plan.delta_M(m, c, c + 1)[j, 0] for c in cells], axis=1)
        pres = np.stack([_total_pressure(inp.plan, m, c, c + 1)[j, 0] for c in cells], axis=1)
        ours = reference_values(build_tables([sec]), np.zeros(cells.size, np.int64), m.phi[cells], R, dT,
                                dM, pres, inp.spec.quantity)
        got = inp.solver.read_cells(cells)
        alpha = axes_angle(inp.spec, m, None if inp.solver.vectors is None else inp.solver.vectors[cells], cells)
        out.append(ZoneData(zone.name, sec, m.phi[cells], R, dT, dM, pres, ours[:, :, :n],
                            got.material[:, :, :n], cmp.scale[k, :n], inp.spec.quantity, inp.spec.axes,
                            inp.case_names, inp.defn.resultants.twist_sign, inp.spec.scale, inp.spec.ply_order,
                            inp.spec.shear, got.written[:, :, :n], alpha))
    return out


def compare_inputs(inp: CompareInputs, tolerance: float, runner=None, progress: Progress | None = None,
                   block_cells: int | None = None) -> tuple[Comparison, dict]:
    """Compare, diagnose a failure, and summarise (plain data, JSON-ready)."""
    from bridge.recover.distributed import SerialRunner

    names = [z.name for z in inp.defn.zones]
    cmp = measure(inp, tolerance, runner or SerialRunner(), progress, block_cells)
    summary = comparison_summary(cmp, inp.case_names, inp.model.zone, names, inp.spec.quantity,
                                 zone_plies=inp.zone_plies())
    summary["cases"] = list(inp.case_names)
    summary["skipped_cases"] = list(inp.skipped)
    summary["unmatched_solver_cases"] = list(inp.solver.unmatched)
    summary["units"] = inp.defn.units.name
    summary["title"] = inp.defn.title
    notes = []
    if inp.skipped:
        notes.append(f"combination(s) {', '.join(inp.skipped)} not checked: the solver gives no ply values for them")
    notes += [n for n in (*inp.source.notes, *inp.solver.files.notes) if WHOLE_READ_MARK in n]
    if summary["unmatched_solver_cases"]:
        notes.append(f"solver case(s) {', '.join(summary['unmatched_solver_cases'])} not compared: no load case or "
                     "combination of the definition has that name")
    if cmp.compared == 0:
        notes.append("no value compared: the solver's ply arrays hold no finite value where plies exist")
    if inp.spec.axes != "global" and not {3, 4} & set(inp.spec.slots):
        notes.append("transverse shear not compared: [solver_plies] components name no transverse component "
                     "(a solver may distribute it through the thickness its own way)")
    if notes:
        summary["note"] = "; ".join(notes)
    failing = [] if cmp.passed else [name for name, z in summary["zones"].items()
                                     if z["max_discrepancy"] is not None and z["max_discrepancy"] > tolerance]
    summary["diagnosis"] = diagnose(zone_data(inp, cmp, set(failing)), tolerance) if failing else []
    return cmp, summary


def write_compare(path: str, summary: dict, cmp: Comparison, model: Model, meta: dict) -> None:
    """The comparison file (HDF5, atomic): cell discrepancy and worst value, metrics, summary JSON."""
    from bridge.results.store import mesh_group

    with atomic_h5(path) as h5:
        h5.attrs["format"] = FORMAT
        h5.attrs["layout_version"] = 1
        for key, value in {**meta, "summary": summary, "caution": CAUTION}.items():
            text = value if isinstance(value, (str, int, float)) else json.dumps(value)
            if isinstance(text, str) and len(text.encode()) > MAX_ATTRIBUTE_BYTES:
                h5.create_dataset(f"meta/{key}", data=text)  # HDF5 attributes stop at 64 KiB (many cases)
            else:
                h5.attrs[key] = text
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
                map_png: str | None = None, *, workers: int | None = None,
                scheduler: str | None = None, client=None, progress: Progress | None = None,
                block_cells: int | None = None) -> dict:
    """Run a comparison and write its outputs; returns the summary (``verdict`` is ``pass`` or ``fail``).

    Parameters
    ----------
    definition, mesh_path : str
    resultants, solver_plies : sequence of str
        Result files of any kind ``recover`` reads; several files are merged by case name.
    output : str
        The comparison file (docs/compare.md).
    tolerance : float
        Largest relative difference accepted.
    view, map_png : str, optional
        Also write the per-cell discrepancy as a mesh and as a picture. The report shows a comparison by
        reading ``output`` (``plybridge report --compare``): the summary is data the report renders itself.
    workers, scheduler, client
        Where the blocks are computed, as for ``recover`` (:func:`bridge.recover.distributed.open_runner`).
    progress : callable(pass name, done cells, total cells), optional
    block_cells : int, optional
        Cells per block (default: about 16 MiB of ply values per block).
    """
    from bridge.mesh.formats import write_mesh
    from bridge.recover.distributed import check_workers, open_runner
    from bridge.recover.run import check_block_cells

    if not (np.isfinite(tolerance) and tolerance > 0):
        raise InputError(f"--tolerance {tolerance!r}: give a positive relative tolerance, e.g. 1e-3")
    if view and not view.lower().endswith((".vtu", ".xdmf")):
        raise InputError(f"--view {view}: write a .vtu or .xdmf file")
    check_workers(workers, scheduler)
    check_block_cells(block_cells)
    inp = load_inputs(definition, mesh_path, resultants, solver_plies)
    with open_runner(workers, scheduler, client) as runner:
        cmp, summary = compare_inputs(inp, tolerance, runner, progress, block_cells)
    paths = {"definition": definition, "mesh": mesh_path,
             **{f"resultants{k}": p for k, p in enumerate(resultants)},
             **{f"solver_plies{k}": p for k, p in enumerate(solver_plies)}}
    write_compare(output, summary, cmp, inp.model, {**provenance(paths), "units": inp.defn.units.name})
    if view:
        write_mesh(view, inp.model.mesh, {"discrepancy": cmp.cell_discrepancy, "zone": inp.model.zone,
                                          "worst_ply": cmp.cell_worst[:, 1] + 1})
    if map_png:
        write_map(map_png, inp.model, cmp.cell_discrepancy, f"{inp.defn.title}: solver vs plybridge")
    return summary


def verdict_lines(summary: dict) -> str:
    """The short key<TAB>value verdict printed on stdout (one ``cause`` line per diagnosed zone)."""
    rows = [("verdict", summary["verdict"]), ("max_discrepancy", f"{summary['max_discrepancy']:.3g}"),
            ("tolerance", f"{summary['tolerance']:.3g}"),
            ("cells_within", f"{summary['fraction_cells_within']:.4g}"),
            ("compared_values", summary["compared_values"]),
            ("coverage", summary["coverage"]["text"])]
    rows += [("coverage_zone", f"{z}\t{c['text']}") for z, c in summary["coverage"]["zones"].items()]
    if summary.get("skipped_cases"):
        rows.append(("skipped_cases", ", ".join(summary["skipped_cases"])))
    if summary.get("unmatched_solver_cases"):
        rows.append(("unmatched_solver_cases", ", ".join(summary["unmatched_solver_cases"])))
    for d in summary.get("diagnosis", []):
        top = d["explained"][0] if d["explained"] else None
        rows.append(("cause", f"{d['zone']}\t{top['name']}\t{top['fix']}" if top else f"{d['zone']}\tunexplained"))
    return "".join(f"{k}\t{v}\n" for k, v in rows)
