"""Load cases and combinations: ``[cases.NAME]`` and ``[combinations.NAME]``.

A case takes its resultants from one step of the resultants input, named by
``step`` (1-based position) or ``source`` (the case name in the file); with no
``[cases]`` table every case found in the file is used, as a limit case with no
temperature change. A combination is a named linear sum of cases with factors
(a table of numbers, never an expression); its temperature change is the same
linear sum unless it states its own ``delta_T`` (linear theory makes both
consistent). A case declared ``held = true`` (a cool-down of a restrained
structure, whose resultants are caused by the temperature change) is never
scaled: in a combination its resultants and pressure join the fixed part with
the thermal stresses, and the strength ratio scales only the other cases; on
its own it is checked under its held state (R = 0 if that fails, else inf).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

import numpy as np

from shells.errors import DefinitionError, ResultantsError

from bridge.definition.schema import check_name, expect_table, suggest, take
from bridge.definition.units import UnitSystem

#: The case kinds every run knows (more are declared in ``[analysis] factor_of_safety``).
KINDS = ("limit", "ultimate")
CASE_SPEC = {"step": "int", "source": "str", "delta_T": "temperature", "temperature_field": "str",
             "kind": "str", "pressure": "stress", "delta_M": "dimensionless", "description": "str", "held": "bool",
             "moisture_field": "str", "pressure_field": "str", "environment": "str"}
COMBO_SPEC = {"factors": "any", "kind": "str", "delta_T": "temperature", "description": "str",
              "environment": "str"}
#: Per-cell arrays of the mesh a case may name, with the case key each one overrides.
FIELDS = {"temperature_field": "delta_T", "moisture_field": "delta_M", "pressure_field": "pressure"}
MAX_CASES = 100000
#: Largest combination factor in magnitude (common practice: load factors are of order one; 1e6 leaves room
#: for unit conversions and keeps every sum far from floating-point overflow).
MAX_FACTOR = 1e6


@dataclass(frozen=True)
class Case:
    """One load case as used by recovery.

    Attributes
    ----------
    name : str
    kind : str
        ``limit``, ``ultimate`` or a kind declared in ``[analysis] factor_of_safety`` (chooses the factor of
        safety).
    delta_T : float
        Uniform temperature change from the stress-free state (unit of the system).
    temperature_field : str or None
        A per-cell temperature-change array of the mesh, overriding ``delta_T``.
    pressure : float
        Lateral pressure, taken as σ3 = −pressure through the section (core crushing).
    moisture_field, pressure_field : str or None
        Per-cell arrays of the mesh overriding ``delta_M`` and ``pressure`` (the pressure field of a held case
        is held).
    factors : tuple of (source case index, factor)
        How the case's resultants are built from the input steps (the part scaled by the strength ratio).
    held_factors : tuple of (source case index, factor)
        The input steps whose resultants are held: the resultants of held cases (``held = true``, e.g. a
        cool-down whose restraint brings its own N and M) form the fixed part with the thermal stresses.
    held_pressure : float
        Lateral pressure of the held part.
    held_parts : tuple of str
        Names of the held cases in this case (itself when it is held).
    environment : str or None
        The environment the case is checked in (its allowables take each material's knockdown for it); None:
        the materials' default knockdown (docs/definition.md).
    """

    name: str
    kind: str = "limit"
    delta_T: float = 0.0
    delta_M: float = 0.0
    temperature_field: str | None = None
    pressure: float = 0.0
    factors: tuple[tuple[int, float], ...] = ()
    held_factors: tuple[tuple[int, float], ...] = ()
    held_pressure: float = 0.0
    held_parts: tuple[str, ...] = ()
    moisture_field: str | None = None
    pressure_field: str | None = None
    environment: str | None = None

    def field(self, key: str) -> str | None:
        """The mesh array named for ``temperature_field``, ``moisture_field`` or ``pressure_field``."""
        return getattr(self, key)


@dataclass(frozen=True)
class Cases:
    """Case and combination tables as written (resolved against the input by :meth:`resolve`)."""

    cases: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)
    combinations: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)

    def resolve(self, input_names: tuple[str, ...]) -> tuple[Case, ...]:
        """Cases and combinations against the case names found in the resultants input."""
        if not self.cases:
            base = [Case(name, factors=((i, 1.0),)) for i, name in enumerate(input_names)]
        else:
            base = [_resolve_case(name, spec, input_names) for name, spec in self.cases.items()]
        by_name = {c.name: c for c in base}
        out = list(base)
        for name, spec in self.combinations.items():
            factors: dict[int, float] = {}
            held: dict[int, float] = {}
            dT = dM = pressure = held_pressure = 0.0
            for case_name, f in spec["factors"].items():
                if case_name not in by_name:
                    raise DefinitionError(f"combinations.{name}.factors: unknown case '{case_name}'"
                                          f"{suggest(case_name, by_name)}; known cases: {', '.join(by_name)}")
                c = by_name[case_name]
                for key in FIELDS:
                    if c.field(key) is not None:
                        raise DefinitionError(f"combinations.{name}: case '{case_name}' uses a "
                                              f"{key.replace('_', ' ')}; combinations take uniform {FIELDS[key]} "
                                              "only")
                for part, source in ((factors, c.factors), (held, c.held_factors)):
                    for idx, g in source:
                        part[idx] = part.get(idx, 0.0) + f * g
                dT += f * c.delta_T
                dM += f * c.delta_M
                pressure += f * c.pressure
                held_pressure += f * c.held_pressure
            out.append(Case(name, spec.get("kind", "limit"), spec.get("delta_T", dT), dM, None, pressure,
                            tuple(sorted(factors.items())), tuple(sorted(held.items())), held_pressure,
                            tuple(n for n in spec["factors"] if by_name[n].held_parts),
                            environment=_combined_environment(name, spec, [by_name[n] for n in spec["factors"]])))
        return tuple(out)


def _combined_environment(name: str, spec: Mapping[str, Any], cases: list[Case]) -> str | None:
    """A combination's environment: its own, else the one its cases share; refused when they differ."""
    if "environment" in spec:
        return spec["environment"]
    named = {c.environment for c in cases}
    if len(named) > 1:
        listed = ", ".join(f"{c.name}: {c.environment or 'none'}" for c in cases)
        raise DefinitionError(f"combinations.{name}: its cases are checked in different environments ({listed}); "
                              "state the combination's own environment = \"...\"")
    return named.pop() if named else None


def _resolve_case(name: str, spec: Mapping[str, Any], input_names: tuple[str, ...]) -> Case:
    where = f"cases.{name}"
    if "step" in spec:
        step = spec["step"]
        if not 1 <= step <= len(input_names):
            raise ResultantsError(f"{where}.step = {step}: the resultants hold {len(input_names)} steps "
                                  f"(1 … {len(input_names)})")
        index = step - 1
    else:
        source = spec.get("source", name)
        if source not in input_names:
            raise ResultantsError(f"{where}: no case '{source}' in the resultants{suggest(source, input_names)}; "
                                  f"found: {', '.join(input_names[:20])}; set step = k or source = \"...\"")
        index = input_names.index(source)
    extra = dict(moisture_field=spec.get("moisture_field"), pressure_field=spec.get("pressure_field"),
                 environment=spec.get("environment"))
    if spec.get("held", False):        # nothing of it scales: its resultants and pressure are held
        return Case(name, spec.get("kind", "limit"), spec.get("delta_T", 0.0), spec.get("delta_M", 0.0),
                    spec.get("temperature_field"), 0.0, (), ((index, 1.0),), spec.get("pressure", 0.0), (name,),
                    **extra)
    return Case(name, spec.get("kind", "limit"), spec.get("delta_T", 0.0), spec.get("delta_M", 0.0),
                spec.get("temperature_field"), spec.get("pressure", 0.0), ((index, 1.0),), **extra)


def _check_kind(values: dict, where: str, kinds: tuple[str, ...]) -> None:
    kind = values.get("kind", "limit")
    if kind not in kinds:
        raise DefinitionError(f"{where}.kind = {kind!r}{suggest(kind, kinds)}; use one of {', '.join(kinds)}, or "
                              "declare the kind with its factor in [analysis] factor_of_safety")


def _refuse_duplicates(names: list) -> None:
    """Case and combination names must differ by more than letter case and surrounding spaces."""
    seen: dict[str, str] = {}
    for name in names:
        key = str(name).strip().casefold()
        if key in seen:
            raise DefinitionError(f"case names {seen[key]!r} and {name!r} differ only in letter case or spaces; "
                                  "rename one so that results and reports name each case once")
        seen[key] = str(name)


def parse_cases(cases: Any, combinations: Any, units: UnitSystem, kinds: tuple[str, ...] = KINDS) -> Cases:
    cases = expect_table(cases, "[cases]")
    combinations = expect_table(combinations, "[combinations]")
    if len(cases) + len(combinations) > MAX_CASES:
        raise DefinitionError(f"more than {MAX_CASES} cases and combinations; split the run")
    _refuse_duplicates([*cases, *combinations])
    parsed: dict[str, dict] = {}
    for name, table in cases.items():
        where = f"cases.{check_name(name, '[cases]')}"
        values = take(expect_table(table, f"[{where}]"), CASE_SPEC, where, units)
        if "step" in values and "source" in values:
            raise DefinitionError(f"[{where}]: give step or source, not both")
        _check_kind(values, where, kinds)
        parsed[name] = values
    combos: dict[str, dict] = {}
    for name, table in combinations.items():
        where = f"combinations.{check_name(name, '[combinations]')}"
        if name in parsed:
            raise DefinitionError(f"[{where}]: a case of the same name exists; rename one")
        values = take(expect_table(table, f"[{where}]"), COMBO_SPEC, where, units, required=("factors",))
        factors = expect_table(values["factors"], f"{where}.factors")
        if not factors:
            raise DefinitionError(f"{where}.factors is empty; give case = factor pairs")
        for case_name, f in factors.items():
            if isinstance(f, bool) or not isinstance(f, (int, float)) or not abs(f) <= MAX_FACTOR:
                raise DefinitionError(f"{where}.factors.{case_name} = {f!r} must be a number from -{MAX_FACTOR:g} "
                                      f"to {MAX_FACTOR:g}")
        _check_kind(values, where, kinds)
        combos[name] = values
    return Cases(parsed, combos)


def combine_steps(weights: np.ndarray, steps: np.ndarray) -> np.ndarray:
    """Cases as linear sums of input steps: ``out[j] = Σ_s weights[j, s] · steps[s]``.

    Only the steps a case uses enter its sum, so a NaN in one step never spreads
    into cases that do not use it (0 · NaN would).

    Parameters
    ----------
    weights : (ncase, nstep)
    steps : (nstep, ncell, 8)
    """
    out = np.zeros((weights.shape[0],) + steps.shape[1:])
    for j, row in enumerate(weights):
        for s in np.flatnonzero(row):
            out[j] += row[s] * steps[s]
    return out
