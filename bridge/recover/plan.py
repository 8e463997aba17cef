"""How a run's cases are built: input-step weights, per-cell fields, factors of safety and environments.

:func:`plan_cases` resolves the definition's cases against the steps of the resultants input into a
:class:`CasePlan`: the scaled and held weights of the steps, the moisture change, pressure and factor of safety
of each case, and the environment whose allowables each case takes. Temperature, moisture and pressure may be
per-cell arrays of the mesh (``temperature_field``, ``moisture_field``, ``pressure_field``), read per block of
cells.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from shells.errors import InputError, ResultantsError

from bridge.definition.cases import FIELDS, MAX_CASES, Case, combine_steps
from bridge.definition.loader import Definition
from bridge.model.build import Model


@dataclass(frozen=True)
class CasePlan:
    """How the run's cases are built from the input steps.

    Attributes
    ----------
    environments : tuple of (str or None)
        The distinct environments of the cases (None: the materials' default knockdown), in order of first use.
    env_group : int64 (ncase,)
        Index into ``environments`` of each case.
    """

    cases: tuple[Case, ...]
    weights: np.ndarray    # (ncase, nstep)
    dM: np.ndarray
    pres: np.ndarray
    fos: np.ndarray
    held_weights: np.ndarray | None = None    # (ncase, nstep): steps of held cases, None when nothing is held
    held_pres: np.ndarray | None = None
    environments: tuple[str | None, ...] = (None,)
    env_group: np.ndarray | None = None

    @property
    def total_weights(self) -> np.ndarray:
        """(ncase, nstep) factors of all the resultants of each case, scaled and held (for total stresses)."""
        return self.weights if self.held_weights is None else self.weights + self.held_weights

    def held(self, steps: np.ndarray) -> np.ndarray | None:
        """(ncase, ncell, 8) held resultants from input steps, None when nothing is held."""
        return None if self.held_weights is None else combine_steps(self.held_weights, steps)

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.cases)

    def _values(self, model: Model, key: str, uniform: np.ndarray, start: int, stop: int,
                held: bool | None = None) -> np.ndarray:
        """(ncase, ncell): each case's field ``key`` over cells start … stop − 1, else its uniform value.

        ``held``: a pressure field belongs to the held part of a held case and to the scaled part otherwise.
        """
        out = np.empty((len(self.cases), stop - start))
        for j, c in enumerate(self.cases):
            name = c.field(key)
            if name is not None and held is not None and held != is_held(c):
                name = None
            if name is None:
                out[j] = uniform[j]
            else:
                out[j] = np.asarray(model.mesh.cell_data[name], dtype=float).reshape(model.n_cells, -1)[start:stop, 0]
        return out

    def delta_T(self, model: Model, start: int, stop: int) -> np.ndarray:
        """(ncase, ncell) temperature change."""
        return self._values(model, "temperature_field", np.array([c.delta_T for c in self.cases]), start, stop)

    def delta_M(self, model: Model, start: int, stop: int) -> np.ndarray:
        """(ncase, ncell) moisture change."""
        return self._values(model, "moisture_field", self.dM, start, stop)

    def pressure(self, model: Model, start: int, stop: int) -> np.ndarray:
        """(ncase, ncell) lateral pressure of the scaled part."""
        return self._values(model, "pressure_field", self.pres, start, stop, held=False)

    def held_pressure(self, model: Model, start: int, stop: int) -> np.ndarray | None:
        """(ncase, ncell) lateral pressure of the held part, None when nothing is held."""
        if self.held_pres is None:
            return None
        return self._values(model, "pressure_field", self.held_pres, start, stop, held=True)


def is_held(case: Case) -> bool:
    """A held case on its own (nothing of it scales)."""
    return bool(case.held_factors) and not case.factors


def plan_cases(defn: Definition, model: Model, step_names: tuple[str, ...]) -> CasePlan:
    from bridge.recover.run import check_run_memory

    try:
        cases = defn.cases.resolve(step_names)
    except InputError as err:
        raise err.within(defn.source) from None
    check_run_memory(model.n_cells, len(step_names), len(cases))
    if len(cases) > MAX_CASES:
        raise ResultantsError(f"{len(cases)} load cases, more than {MAX_CASES}; split the run into several "
                              "(select cases in [cases])", defn.source)
    W = np.zeros((len(cases), len(step_names)))
    H = np.zeros_like(W)
    for j, c in enumerate(cases):
        for idx, f in c.factors:
            W[j, idx] += f
        for idx, f in c.held_factors:
            H[j, idx] += f
        for key in FIELDS:
            name = c.field(key)
            if name is not None and name not in model.mesh.cell_data:
                raise ResultantsError(f"cases.{c.name}.{key}: the mesh has no cell array '{name}'; arrays: "
                                      f"{', '.join(sorted(model.mesh.cell_data)) or '(none)'}", defn.source)
            if name is not None:
                check_field_array(model.mesh.cell_data[name], model.n_cells, f"cases.{c.name}.{key} = '{name}'",
                                  defn.source)
    environments = tuple(dict.fromkeys(c.environment for c in cases))
    check_environments(defn, cases)
    held = any(c.held_factors for c in cases)
    return CasePlan(cases, W, np.array([c.delta_M for c in cases]), np.array([c.pressure for c in cases]),
                    np.array([defn.analysis.fos(c.kind) for c in cases]), H if held else None,
                    np.array([c.held_pressure for c in cases]) if held else None, environments,
                    np.array([environments.index(c.environment) for c in cases], dtype=np.int64))


def check_field_array(values, n_cells: int, where: str, source) -> None:
    """Refuse a per-cell field that is not one finite number per cell (one line naming the first bad cells)."""
    a = np.asarray(values)
    if a.dtype.kind not in "fiu" or a.size != n_cells:
        raise ResultantsError(f"{where}: a per-cell field needs one number per cell ({n_cells}); the array has "
                              f"{a.size} values of type {a.dtype}", source)
    bad = np.flatnonzero(~np.isfinite(a.astype(float).reshape(-1)))
    if bad.size:
        raise ResultantsError(f"{where}: the array is not finite at cells {', '.join(map(str, bad[:5]))}; give "
                              "finite values", source)


def check_environments(defn: Definition, cases) -> None:
    """Refuse a case whose environment a material's environment table does not list (one line, the fix)."""
    from shells.errors import DefinitionError

    for c in cases:
        if c.environment is None:
            continue
        for m in defn.materials.values():
            names = [e for e, _ in m.environment_knockdowns]
            if names and c.environment not in names:
                where = "combinations" if c.name in defn.cases.combinations else "cases"
                raise DefinitionError(f"{where}.{c.name}.environment = '{c.environment}': material '{m.name}' has no "
                                      f"factor for it in knockdown.environment ({', '.join(names)}); add "
                                      f"{c.environment} = ... there or correct the name", defn.source)


def environment_note(defn: Definition, plan: CasePlan) -> list[str]:
    """A note when cases name no environment while materials have environment tables (they take the smallest)."""
    tabled = [m.name for m in defn.materials.values() if m.environment_knockdowns]
    bare = [c.name for c in plan.cases if c.environment is None]
    if not tabled or not bare:
        return []
    return [f"cases {', '.join(bare[:5])}{' …' if len(bare) > 5 else ''} name no environment: materials "
            f"{', '.join(tabled[:5])} take the smallest factor of their environment table there"]
