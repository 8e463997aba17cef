"""Where the blocks of a recovery run are computed: here, or on a dask.distributed cluster.

A run is cut into blocks of whole store chunks (``bridge.results.store.CHUNK_CELLS``).
Each block is described by a small picklable :class:`BlockSpec` (cell range,
section ids, material angles, temperature changes and — when the resultants
are not an HDF5 file that a task can open by path — the block's input steps).
The run-wide :class:`BlockContext` (section tables as numpy arrays, criteria
by name, case weights) is sent once to every worker. Tasks open input files by
path inside the task (h5py objects do not pickle) and return the block's
arrays; the driver alone writes the store (HDF5 is not safe for concurrent
writers). Results are taken in block order through a bounded window, so the
driver holds at most a few blocks at a time and the result does not depend on
which worker finished first.

The runners take any context with a ``compute(spec)`` method, so ``compare``
streams its blocks through the same machinery (:mod:`bridge.compare.blocks`).

Pickle is used only by dask for its own messages between the processes of a
cluster the user started; no file is ever unpickled.
"""

from __future__ import annotations

import collections
import contextlib
import uuid
from dataclasses import dataclass
from typing import Iterable, Iterator

import numpy as np

from shells.errors import InputError
from shells.recovery_tables import SectionTables

from bridge.definition.cases import combine_steps
from bridge.recover.beyond import Beyond, split_extra
from bridge.recover.resultants import CellAxes, H5Steps

#: Most worker processes ``--workers`` starts on this machine.
MAX_LOCAL_WORKERS = 256

#: Environment of local worker processes: one numba (and BLAS / OpenMP) thread per single-threaded worker.
WORKER_ENV = {"NUMBA_NUM_THREADS": "1", "OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1",
              "MKL_NUM_THREADS": "1"}


@dataclass(frozen=True)
class BlockContext:
    """What every block of a run shares (sent once per worker).

    Attributes
    ----------
    criteria : tuple of str
        Registered criterion names, in the run's order.
    tables : SectionTables
    weights : float64 (ncase, nstep)
        Case ← input-step combination factors.
    dM, pres, fos : float64 (ncase,)
        Moisture change, lateral pressure and factor of safety of each case (the blocks carry them per cell).
    store_plies : bool
    reader : H5Steps or None
        The resultants file each task reads its cells from by path (None: blocks carry their steps).
    field_G : float64 (nrows, 3, 2, 12) or None
        Gradient-to-shear matrices of every ply row, when transverse shear comes from the resultant field
        (:mod:`bridge.recover.field_shear`).
    held_weights : float64 (ncase, nstep) or None
        Case ← input-step factors of the held part (held cases), None when nothing is held.
    held_pres : float64 (ncase,) or None
        Lateral pressure of the held part.
    case_params : postproc.recover.CaseParams or None
        The allowables of each case's environment (None: the tables' own, one environment).
    beyond : Beyond
        Misalignment turns, progressive failure and restricted envelopes (:mod:`bridge.recover.beyond`).
    """

    criteria: tuple[str, ...]
    tables: SectionTables
    weights: np.ndarray
    dM: np.ndarray
    pres: np.ndarray
    fos: np.ndarray
    store_plies: bool = False
    reader: H5Steps | None = None
    field_G: np.ndarray | None = None
    held_weights: np.ndarray | None = None
    held_pres: np.ndarray | None = None
    case_params: object = None
    beyond: Beyond = Beyond()

    def compute(self, spec: "BlockSpec") -> "BlockResult":
        """The block task of a recovery run (:func:`compute_block`)."""
        return compute_block(self, spec)


@dataclass(frozen=True)
class BlockSpec:
    """One block: cells ``start … stop − 1`` and their per-cell inputs.

    Attributes
    ----------
    index, start, stop : int
    section : int64 (ncell,)
    phi : float64 (ncell,)
        Material angle, degrees.
    dT : float64 (ncase, ncell)
        Temperature change of each case.
    steps : float64 (nstep, ncell, 8) or None
        Input steps in the element frame and definition units; None when the
        task reads them through ``BlockContext.reader``.
    gradients : float64 (nstep, ncell, 12) or None
        Gradients of N and M of every input step, laminate axes (field transverse shear only).
    gradient_valid : bool (ncell,) or None
        Cells with a gradient stencil (the others use the Q-only distribution).
    dM, pres : float64 (ncase, ncell) or None
        Moisture change and lateral pressure of each case and cell (None: the context's per-case values).
    held_pres : float64 (ncase, ncell) or None
        Lateral pressure of the held part per cell (None: the context's).
    """

    index: int
    start: int
    stop: int
    section: np.ndarray
    phi: np.ndarray
    dT: np.ndarray
    steps: np.ndarray | None = None
    gradients: np.ndarray | None = None
    gradient_valid: np.ndarray | None = None
    dM: np.ndarray | None = None
    pres: np.ndarray | None = None
    held_pres: np.ndarray | None = None


@dataclass(frozen=True)
class BlockResult:
    """The recovered arrays of one block (see :func:`postproc.recover.recover_cells`) and the extra datasets
    by store path (:mod:`bridge.recover.beyond`)."""

    index: int
    start: int
    stop: int
    envelope: dict
    cells: dict
    plies: dict | None
    extra: dict | None = None


def compute_block(ctx: BlockContext, spec: BlockSpec) -> BlockResult:
    """Combine the block's steps into cases and recover every cell, ply and point.

    The same function runs in the serial loop and in dask tasks, so both give
    the same bits.
    """
    from postproc.recover import recover_cells
    from shells.criteria import by_name

    steps = spec.steps if spec.steps is not None else ctx.reader.read(slice(spec.start, spec.stop),
                                                                      CellAxes(spec.phi))
    with np.errstate(over="ignore", invalid="ignore"):  # an overflow gives inf: the cell-case is flagged
        R = combine_steps(ctx.weights, steps)
        held = None if ctx.held_weights is None else combine_steps(ctx.held_weights, steps)
    shear = held_shear = None
    turn_shear = None
    if spec.gradients is not None:
        from postproc.gradients import field_shear

        t = ctx.tables

        def shear_of(weights, resultants, rot=0.0):
            return field_shear(ctx.field_G, t.F, t.first, t.nply, t.max_plies, spec.section, spec.phi + rot,
                               combine_steps(weights, spec.gradients), resultants, spec.gradient_valid)

        def turned(rot):
            return shear_of(ctx.weights, R, rot), None if held is None else shear_of(ctx.held_weights, held, rot)

        shear, held_shear = turned(0.0)
        turn_shear = turned
    dM = ctx.dM if spec.dM is None else spec.dM
    pres = ctx.pres if spec.pres is None else spec.pres
    held_pres = ctx.held_pres if spec.held_pres is None else spec.held_pres
    env, cells, plies = recover_cells(tuple(by_name(n) for n in ctx.criteria), ctx.tables, spec.section,
                                      spec.phi, R, spec.dT, dM, pres, ctx.fos, ctx.store_plies,
                                      shear=shear, held=held, held_pressure=held_pres, held_shear=held_shear,
                                      case_params=ctx.case_params, rotations=ctx.beyond.rotations,
                                      shear_of=turn_shear)
    extra = split_extra(env, cells)
    extra.update(ctx.beyond.compute(ctx.tables, spec.section, spec.phi, R, spec.dT, dM, pres, ctx.fos, held,
                                    held_pres, shear, held_shear, turn_shear, ctx.case_params))
    return BlockResult(spec.index, spec.start, spec.stop, env, cells, plies, extra)


def _task(ctx, spec):
    """A dask task: cap numba at one thread in this worker thread, then compute the block (``ctx.compute``)."""
    import numba

    numba.set_num_threads(1)  # thread-local: the executor thread that runs the kernel
    return ctx.compute(spec)


class SerialRunner:
    """Compute blocks one after the other in this process (numba uses every core)."""

    label = "serial"

    def map(self, ctx, specs: Iterable) -> Iterator:
        """``ctx.compute(spec)`` of every spec, in order (any context with a ``compute`` method)."""
        for spec in specs:
            yield ctx.compute(spec)


class DaskRunner:
    """Compute blocks as tasks of a dask.distributed client, yielding results in block order.

    Parameters
    ----------
    client : distributed.Client
    window : int, optional
        Most blocks submitted and not yet taken (default two per worker thread, at least 4).
    """

    def __init__(self, client, window: int | None = None):
        self.client = client
        threads = sum(client.nthreads().values()) or 1
        self.window = window or max(4, 2 * threads)
        self.label = f"dask ({len(client.nthreads())} workers, {threads} threads)"

    def map(self, ctx, specs: Iterable) -> Iterator:
        """``ctx.compute(spec)`` of every spec as dask tasks, results in spec order."""
        shared = self.client.scatter(ctx, broadcast=True, hash=False)
        run = uuid.uuid4().hex[:12]
        pending: collections.deque = collections.deque()
        try:
            for spec in specs:
                pending.append(self.client.submit(_task, shared, spec, key=f"plybridge-block-{run}-{spec.index}",
                                                  pure=False))
                if len(pending) >= self.window:
                    yield _take(pending)
            while pending:
                yield _take(pending)
        finally:
            for fut in pending:
                fut.cancel()
            del shared


def _take(pending: collections.deque):
    fut = pending.popleft()
    try:
        return fut.result()
    finally:
        fut.release()


def check_workers(workers: int | None, scheduler: str | None) -> None:
    """Refuse contradictory or out-of-range distribution options."""
    if workers is not None and scheduler is not None:
        raise InputError("--workers and --scheduler exclude each other: --workers starts a cluster on this "
                         "machine, --scheduler uses a running one; give one of them")
    if workers is not None and not 1 <= workers <= MAX_LOCAL_WORKERS:
        raise InputError(f"--workers {workers}: give a number of worker processes from 1 to {MAX_LOCAL_WORKERS}")
    if scheduler is not None and (not scheduler.strip() or len(scheduler) > 500
                                  or any(ord(c) < 32 for c in scheduler)):
        raise InputError("--scheduler: give the scheduler address, e.g. tcp://10.0.0.5:8786")


@contextlib.contextmanager
def open_runner(workers: int | None = None, scheduler: str | None = None, client=None):
    """The block runner of a run: serial, a local cluster of ``workers`` processes, or ``scheduler``'s.

    Parameters
    ----------
    workers : int, optional
        Start a LocalCluster of this many single-threaded worker processes on
        the loopback interface, dashboard off; closed at the end.
    scheduler : str, optional
        Address of a running scheduler (``tcp://host:8786``).
    client : distributed.Client, optional
        Use this client (not closed here).
    """
    check_workers(workers, scheduler)
    if client is not None:
        yield DaskRunner(client)
        return
    if workers is None and scheduler is None:
        yield SerialRunner()
        return
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise InputError("--workers / --scheduler need dask.distributed; install plybridge[dist]") from None
    with contextlib.ExitStack() as stack:
        if workers is not None:
            cluster = stack.enter_context(LocalCluster(
                n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                dashboard_address=None, env=dict(WORKER_ENV), silence_logs=40))
            address = cluster
        else:
            address = scheduler
        try:
            dask_client = stack.enter_context(Client(address))
        except (OSError, TimeoutError) as err:
            raise InputError(f"--scheduler {scheduler}: cannot reach the scheduler ({err}); start one with "
                             "'dask scheduler' and workers with 'dask worker ADDRESS' (docs/scale.md)") from None
        if not dask_client.nthreads():
            try:
                dask_client.wait_for_workers(1, timeout=60)
            except TimeoutError:
                raise InputError(f"--scheduler {scheduler}: no worker joined within 60 s; start workers with "
                                 f"'dask worker {scheduler} --nthreads 1' (docs/scale.md)") from None
        yield DaskRunner(dask_client)
