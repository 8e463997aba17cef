"""Orchestration of ``plybridge recover``: inputs → blocks of cells → the results store.

Cells are processed in blocks (memory flat in model size): for each block the
resultants of every input step are read (streamed from HDF5, sliced from memory
for the other formats), combined into the run's cases, recovered, and the
envelope rows written to the store before the next block is read.
"""

from __future__ import annotations

import contextlib
import datetime
import hashlib
from pathlib import Path
from typing import Callable, Iterator, Sequence

import numpy as np

from shells.criteria import CRITERIA, by_name, check_requirements
from shells.errors import InputError

from bridge.definition.loader import Definition, load_definition
from bridge.mesh.checks import mesh_notes
from bridge.mesh.formats import read_mesh
from bridge.model.build import Model, build_model
from bridge.results.partial import companions
from bridge.results.store import CHUNK_CELLS, LAYOUT_VERSION, StoreLayout, mesh_group
from bridge.recover.beyond import Beyond, beyond_of, check_progressive
from bridge.recover.distributed import BlockContext, BlockSpec
from bridge.recover.plan import CasePlan, environment_note, plan_cases  # noqa: F401  (CasePlan: the API)
from bridge.recover.resultants import ResultantSource
from bridge.recover.field_shear import METHOD as FIELD_METHOD, ShearCheck, check_note, field_plan

#: Target size of the resultants of one block (bytes): bounds the memory of a run.
BLOCK_BYTES = 32 * 2 ** 20


def sha256_of(path: str | Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(2 ** 20), b""):
            h.update(chunk)
    return h.hexdigest()


def defaults_of(model: Model, crit, stress_unit: str = "") -> dict[str, dict[str, str]]:
    """Material → {criterion: note} of the defaults the chosen criteria rely on (derived strain limits, ...)."""
    from shells.ply_defaults import notes_for

    materials = {p.material.name: p.material for s in model.sections for p in s.laminate.plies}
    return notes_for(materials.values(), {c.name for c in crit}, stress_unit)


def criteria_of(defn: Definition, model: Model) -> tuple[type, ...]:
    crit = tuple(by_name(n) for n in defn.analysis.criteria)
    materials = {p.material.name: p.material.params() for s in model.sections for p in s.laminate.plies}
    try:
        check_requirements(crit, materials)
    except InputError as err:
        raise err.within(defn.source) from None
    return crit


#: Largest --block-cells.
MAX_BLOCK_CELLS = 2 ** 22


def check_run_memory(n_cells: int, n_steps: int, n_cases: int, cells: int = 256, per_ply_case: int = 0) -> None:
    """Refuse, before allocating, a run whose case weights and smallest blocks exceed the memory available.

    Estimate: the case weights (n_cases × n_steps float64), the per-cell model (about 100 bytes a cell) and
    three blocks of ``cells`` cells (input steps and cases, 64 bytes each per cell, plus ``per_ply_case``).
    """
    from bridge.guards import check_memory

    block = cells * (64 * (n_steps + n_cases) + 8 * n_cases + per_ply_case)
    need = 8 * n_cases * n_steps + 100 * n_cells + 3 * block
    check_memory(need, f"the run ({n_cases:,} cases from {n_steps:,} input steps, {n_cells:,} cells)",
                 "split the cases into several runs")


def block_size(n_steps: int, n_cases: int, max_plies: int, store_plies: bool, field: bool = False) -> int:
    """Cells per block: about BLOCK_BYTES of block arrays, a whole number of store chunks."""
    per_cell = 8 * 8 * (n_steps + n_cases) + (max_plies * 3 * 8 * 8 * n_cases if store_plies else 0)
    if field:       # step gradients and case shear at every ply point
        per_cell += 8 * 12 * (n_steps + n_cases) + 8 * 6 * max_plies * n_cases
    cells = int(max(256, min(65536, BLOCK_BYTES // max(per_cell, 1))))
    return cells // CHUNK_CELLS * CHUNK_CELLS if cells >= CHUNK_CELLS else cells


def check_block_cells(block_cells: int | None) -> None:
    if block_cells is not None and not 1 <= block_cells <= MAX_BLOCK_CELLS:
        raise InputError(f"--block-cells {block_cells}: give a number of cells from 1 to {MAX_BLOCK_CELLS}")


def input_digests(paths: dict[str, str]) -> dict[str, dict]:
    """role → {path, sha256} of every input, plus ``data_sha256`` of the heavy data beside an XDMF file."""
    out = {}
    for role, p in paths.items():
        entry = {"path": p, "sha256": sha256_of(p)}
        extra = [sha256_of(c) for c in companions(p)]
        if extra:
            entry["data_sha256"] = extra[0] if len(extra) == 1 else extra
        out[role] = entry
    return out


def provenance(paths: dict[str, str], digests: dict[str, dict] | None = None) -> dict:
    """Tool, version, time (UTC) and the inputs' digests (role → path, resolved path, sha256, …)."""
    from shells import __version__

    digests = digests if digests is not None else input_digests(paths)
    return {
        "tool": "plybridge", "tool_version": __version__,
        "created": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
        "inputs": {role: {**e, "resolved": str(Path(e["path"]).resolve())} for role, e in digests.items()},
    }


Progress = Callable[[int, int], None]
Note = Callable[[str], None]


def prepare(definition: str, mesh_path: str, resultants: Sequence[str]):
    """Load every input of a run: (definition, model, source, case plan, criteria)."""
    defn = load_definition(definition)
    mesh = read_mesh(mesh_path)
    model = build_model(defn, mesh)
    source = ResultantSource.of_model(resultants, model)
    plan = plan_cases(defn, model, source.names)
    crit = criteria_of(defn, model)
    check_progressive(defn, model)
    return defn, model, source, plan, crit


def run_notes(defn: Definition, model: Model, source: ResultantSource, plan: CasePlan | None = None) -> list[str]:
    """One-line notes of the run (bridge.recover.notes): what was assumed or looks unusual."""
    from bridge.recover.cell_order import ASSUMED_NOTE
    from bridge.recover.notes import membrane_only_note, ranges_note

    return [*ranges_note(defn.analysis.check_ranges), *(n for n in source.notes if n != ASSUMED_NOTE),
            *membrane_only_note(model.sections, model.section, model.n_cells, source.read, model.section_names),
            *(environment_note(defn, plan) if plan is not None else ())]


def cell_order(source: ResultantSource) -> str:
    """How the resultants' cells were tied to the mesh: ``assumed`` (HDF5, no topology) or ``checked``."""
    from bridge.recover.cell_order import ASSUMED_NOTE

    return "assumed" if ASSUMED_NOTE in source.notes else "checked"


def case_params(model: Model, plan: CasePlan):
    """The allowables of each case's environment (None when every case takes the default ones)."""
    from postproc.recover import CaseParams
    from shells.recovery_tables import environment_params

    if plan.environments == (None,):
        return None
    return CaseParams(plan.env_group, [environment_params(model.sections, env) for env in plan.environments])


def block_context(defn: Definition, tables, source: ResultantSource, plan: CasePlan,
                  store_plies: bool, field=None, model: Model | None = None,
                  beyond: Beyond | None = None) -> BlockContext:
    """What every block task shares: small arrays and names, no file handles."""
    return BlockContext(tuple(defn.analysis.criteria), tables, plan.weights, plan.dM, plan.pres, plan.fos,
                        store_plies, source.reader, None if field is None else field.G, plan.held_weights,
                        plan.held_pres, None if model is None else case_params(model, plan),
                        beyond or beyond_of(defn, plan))


def block_specs(model: Model, source: ResultantSource, plan: CasePlan, step: int,
                skip: set[int] = frozenset(), field=None, check=None) -> Iterator[BlockSpec]:
    """The blocks not in ``skip``, in order, built lazily (one block's inputs at a time).

    With a field-shear plan, the gradients of each block are fitted here (the block's neighbours may lie in
    other blocks) and compared with the input Q in ``check`` (every block, also those skipped on resume).
    """
    n = model.n_cells
    for index, start in enumerate(range(0, n, step)):
        stop = min(n, start + step)
        g = valid = None
        if field is not None:
            g, q, valid = field.block_gradients(source.read_cells, start, stop)
            check.add(start, stop, plan.weights, g, q, valid)
        if index in skip:
            continue
        yield BlockSpec(index, start, stop, model.section[start:stop], model.phi[start:stop],
                        plan.delta_T(model, start, stop), source.block_steps(start, stop), g, valid,
                        plan.delta_M(model, start, stop), plan.pressure(model, start, stop),
                        plan.held_pressure(model, start, stop))


def run_recover(definition: str, mesh_path: str, resultants: Sequence[str], output: str,
                store_plies: bool | None = None, progress: Progress | None = None, *, workers: int | None = None,
                scheduler: str | None = None, client=None, block_cells: int | None = None,
                resume: bool = False, note: Note | None = None) -> dict:
    """Recover every cell and case and write the results store at ``output``.

    Parameters
    ----------
    definition, mesh_path : str
        Definition file and mesh file.
    resultants : sequence of str
        Resultants input (one HDF5 / XDMF file, or VTU files, docs/meshes.md).
    output : str
        The store; replaced only when complete (docs/results.md, docs/scale.md).
    store_plies : bool, optional
        Also store every ply stress and strain (default: as the unfinished run when resuming, else False).
    progress : callable(done_cells, total_cells), optional
    workers : int, optional
        Compute blocks on a local cluster of this many single-threaded worker processes.
    scheduler : str, optional
        Compute blocks on the running dask cluster at this address.
    client : distributed.Client, optional
        Compute blocks with this client (tests, notebooks).
    block_cells : int, optional
        Cells per block (default: as the unfinished run when resuming, else about 32 MiB of block arrays, a
        multiple of the store chunk).
    resume : bool
        Continue the unfinished run of ``output`` (same inputs; options remembered by its journal) instead of
        starting again.
    note : callable(str), optional
        Receives one-line notes about resuming.

    Returns
    -------
    dict
        The run summary (see :func:`postproc.summary.SummaryAccumulator.result`).
    """
    from postproc.summary import SummaryAccumulator
    from postproc.summary_beyond import BeyondAccumulator

    from bridge.recover.distributed import check_workers, open_runner
    from bridge.results.partial import PartialStore, check_store_space, journal_options

    check_workers(workers, scheduler)
    remembered = journal_options(output) if resume else {}
    block_cells = block_cells if block_cells is not None else remembered.get("block_cells")
    store_plies = bool(store_plies if store_plies is not None else remembered.get("store_plies", False))
    check_block_cells(block_cells)
    defn, model, source, plan, crit = prepare(definition, mesh_path, resultants)
    notes = [*model.mesh.notes, *mesh_notes(model.mesh), *run_notes(defn, model, source, plan)]
    tables = model.tables()
    beyond = beyond_of(defn, plan)
    field, check = None, None
    if defn.analysis.transverse_shear == FIELD_METHOD:
        field, check = field_plan(model), ShearCheck(model.zone, len(defn.zones))
    n = model.n_cells
    step = block_cells or block_size(len(source.names), len(plan.cases), tables.max_plies, store_plies,
                                     field is not None)
    check_run_memory(n, len(source.names), len(plan.cases), step,
                     tables.max_plies * 3 * 8 * 8 * len(plan.cases) if store_plies else 0)
    layout = StoreLayout(n, tables.max_plies, plan.names, store_plies, len(CRITERIA), chunk_cells=step,
                         extra=beyond.datasets(tables.max_plies))
    check_store_space(output, layout, model.mesh, resume)
    paths = {"definition": definition, "mesh": mesh_path, **{f"resultants{k}": p for k, p in enumerate(resultants)}}
    digests = input_digests(paths)
    fingerprint = {"inputs": digests, "options": {"block_cells": step, "store_plies": store_plies,
                                                  "n_cells": n, "layout_version": LAYOUT_VERSION}}
    acc = SummaryAccumulator(model.zone, len(defn.zones), len(plan.cases), defn.analysis.hot_spots)
    more = BeyondAccumulator(model.zone, len(defn.zones), len(plan.cases), [r.name for r in beyond.restricted],
                             defn.analysis.hot_spots)
    with contextlib.ExitStack() as stack:
        runner = stack.enter_context(open_runner(workers, scheduler, client))
        partial = stack.enter_context(PartialStore(output, fingerprint, layout, resume, note, step))
        store, done = partial.writer, set(partial.done)
        results = stack.enter_context(contextlib.closing(runner.map(
            block_context(defn, tables, source, plan, store_plies, field, model, beyond),
            block_specs(model, source, plan, step, done, field, check))))
        for index, start in enumerate(range(0, n, step)):
            stop = min(n, start + step)
            if index in done:
                acc.add(start, stop, {}, store.read_cells(start, stop))
                more.add(start, stop, store.read_extra(start, stop))
            else:
                res = next(results)
                partial.write_block(res.index, res.start, res.stop, res.envelope, res.cells, res.plies, res.extra)
                acc.add(res.start, res.stop, res.envelope, res.cells)
                more.add(res.start, res.stop, res.extra or {})
            if progress:
                progress(stop, n)
        summary = acc.result(plan.names, zone_names=[z.name for z in defn.zones],
                             laminate_of_zone=[z.laminate for z in defn.zones])
        summary.update(more.result(plan.names, [z.name for z in defn.zones]))
        if check is not None:
            summary["transverse_shear"] = check.result([z.name for z in defn.zones])
            notes = notes + check_note(summary["transverse_shear"])
        summary["notes"] = notes
        summary["cell_order"] = cell_order(source)
        summary["defaults"] = defaults_of(model, crit, defn.units.label("stress"))
        summary["held"] = {c.name: list(c.held_parts) for c in plan.cases if c.held_parts}
        if progress is not None and note is not None:          # on stderr unless --quiet
            for mat, texts in summary["defaults"].items():
                for name, text in texts.items():
                    note(f"material '{mat}', {name}: {text}")
        _finish(store, summary, crit, tables, model, source, plan, defn, provenance(paths, digests), store_plies,
                field, beyond)
        partial.complete()
    return summary


def _finish(store, summary, crit, tables, model, source, plan, defn, prov, store_plies,
            field=None, beyond: Beyond | None = None) -> None:
    """The datasets and the run metadata written once, after every block."""
    from bridge.recover.hotspots import hot_cells, states_of_cells
    from bridge.results.meta import run_meta
    from bridge.results.store import material_tables, section_tables

    hot = hot_cells(summary)
    turn = store.h5["cells/misalignment"][()][hot] if "cells/misalignment" in store.h5 else None
    store.write_static("hotspots", states_of_cells(hot, crit, tables, model, source, plan, field, beyond,
                                                   case_params(model, plan), turn))
    store.write_static("mesh", mesh_group(model.mesh.points, model.mesh.blocks))
    store.write_static("model", {"zone": model.zone.astype(np.int32), "section": model.section.astype(np.int32),
                                 "material_angle": model.phi, "normal": model.normal, "frame_x": model.frame_x})
    store.write_static("sections", section_tables(tables, model.sections))
    store.write_static("materials", material_tables(defn.materials))
    store.write_meta(run_meta(defn, model, plan, source.names, summary, store_plies, prov))
