"""The :class:`postproc.run_meta.RunMeta` of a run, built from its definition, model and case plan.

``recover`` calls :func:`run_meta` once, after the last block; the store keeps the
result (docs/results.md) and every reader gets it back typed.
"""

from __future__ import annotations

import dataclasses
from typing import Mapping, Sequence

import numpy as np

from postproc.run_meta import (AnalysisInfo, CaseInfo, CriterionInfo, DefaultUsed, EnvelopeInfo, InputFile,
                               MaterialInfo, Named, PlyInfo, ProgressiveInfo, Property, Provenance, RunMeta,
                               RunSummary, SectionInfo, ZoneInfo)
from shells.criteria import CRITERIA
from shells.defaults import CAUTION

#: Material fields that are not properties (shown elsewhere or not at all).
_NOT_PROPERTIES = {"name", "knockdown", "knockdown_factors", "environment_knockdowns", "source", "description"}


def _definition_key(kind: str, field_name: str) -> str:
    """The definition-file key of a material dataclass field (``cte`` is written ``alpha``)."""
    from bridge.definition.materials import _RENAME

    back = {new: old for old, new in _RENAME.get(kind, {}).items()}
    return back.get(field_name, field_name)


def material_info(m) -> MaterialInfo:
    """A material's properties as written (definition keys, run units, the unit kind of each)."""
    from bridge.definition.materials import SPECS

    spec = SPECS.get(m.kind, {})
    props = []
    for f in dataclasses.fields(m):
        value = getattr(m, f.name)
        if f.name in _NOT_PROPERTIES or value is None:
            continue
        key = _definition_key(m.kind, f.name)
        if dataclasses.is_dataclass(value):           # a table of the definition (strain_limits)
            props.extend(Property(f"{key}.{g.name}", float(getattr(value, g.name)), "dimensionless")
                         for g in dataclasses.fields(value) if getattr(value, g.name) is not None)
            continue
        kind = spec.get(key, "dimensionless")
        kind = "dimensionless" if kind in ("any", "str", "int", "bool") else kind
        props.append(Property(key, value if isinstance(value, (bool, str)) else float(value), kind))
    return MaterialInfo(m.name, m.kind, tuple(props), float(m.knockdown),
                        tuple(Named(k, float(v)) for k, v in m.knockdown_factors), m.source, m.description,
                        tuple(Named(k, float(v)) for k, v in m.environment_knockdowns))


def section_info(i: int, name: str, sec) -> SectionInfo:
    s = sec.summary()
    lam = sec.laminate
    return SectionInfo(
        id=i, name=name, laminate=lam.name,
        plies=tuple(PlyInfo(lam.plies[k].material.name, float(angle), float(lam.plies[k].thickness),
                            (1 if r == 0 or lam.rows[r - 1][0] != k else -1) if lam.plies[k].wound else 0)
                    for r, (k, angle) in enumerate(lam.rows)),
        thickness=float(s["thickness"]), offset=float(lam.offset), areal_mass=float(s["areal_mass"]),
        layup=lam.notation, shear_method=sec.shear_method,
        membrane=tuple(Named(k, float(v)) for k, v in s["membrane"]["restrained"].items()),
        flexural=tuple(Named(k, float(v)) for k, v in s["flexural"]["restrained"].items()),
        membrane_free=tuple(Named(k, float(v)) for k, v in s["membrane"]["free"].items()),
        flexural_free=tuple(Named(k, float(v)) for k, v in s["flexural"]["free"].items()),
        flags=tuple(k for k, v in s["flags"].items() if v))


def case_infos(defn, plan, step_names: Sequence[str]) -> tuple[CaseInfo, ...]:
    combos = defn.cases.combinations
    out = []
    for c, fos in zip(plan.cases, plan.fos):
        spec = combos.get(c.name)
        combination = tuple(Named(n, float(f)) for n, f in spec["factors"].items()) if spec else ()
        out.append(CaseInfo(c.name, c.kind, float(c.delta_T), float(c.delta_M), float(c.pressure), float(fos),
                            c.temperature_field, tuple(Named(step_names[k], float(f)) for k, f in c.factors),
                            combination, tuple(c.held_parts),
                            tuple(Named(step_names[k], float(f)) for k, f in c.held_factors), c.environment,
                            tuple(Named(m.name, float(m.knockdown_for(c.environment)))
                                  for m in defn.materials.values()),
                            c.moisture_field, c.pressure_field))
    return tuple(out)


def analysis_extras(a) -> dict:
    """The progressive, misalignment and restricted-envelope settings of an ``[analysis]``, as AnalysisInfo fields."""
    prog = a.progressive
    return {"progressive": None if prog is None else ProgressiveInfo(float(prog.matrix_retained),
                                                                      float(prog.fibre_retained),
                                                                      tuple(prog.criteria)),
            "misalignment": float(a.misalignment),
            "envelopes": tuple(EnvelopeInfo(e.name, e.criteria, e.modes, e.kinds, e.cases, e.description)
                               for e in a.envelopes)}


def run_meta(defn, model, plan, step_names: Sequence[str], summary: Mapping, store_plies: bool,
             provenance: Mapping) -> RunMeta:
    """The run's metadata.

    Parameters
    ----------
    defn, model, plan
        The run's :class:`~bridge.definition.loader.Definition`, :class:`~bridge.model.build.Model` and
        :class:`~bridge.recover.run.CasePlan`.
    step_names : sequence of str
        Names of the input steps (the resultants' cases).
    summary : dict
        :meth:`postproc.summary.SummaryAccumulator.result`.
    store_plies : bool
    provenance : dict
        ``tool``, ``tool_version``, ``created`` and ``inputs`` (role → path, sha256, …).
    """
    a = defn.analysis
    counts = np.bincount(model.zone, minlength=len(defn.zones))
    section_of_zone = {}
    for k in range(len(defn.zones)):
        cells = np.flatnonzero(model.zone == k)
        section_of_zone[k] = int(model.section[cells[0]]) if cells.size else -1
    inputs = tuple(InputFile(role, e["path"], e["sha256"], e.get("resolved", ""),
                             tuple(np.atleast_1d(e.get("data_sha256", ())).tolist()))
                   for role, e in provenance["inputs"].items())
    return RunMeta(
        title=defn.title, units=defn.units.name, unit_labels=defn.units.labels(),
        store_kind="plies" if store_plies else "envelope", caution=CAUTION,
        provenance=Provenance(provenance["tool"], provenance["tool_version"], provenance["created"], inputs),
        analysis=AnalysisInfo(tuple(a.criteria), tuple(Named(k, float(v)) for k, v in a.factor_of_safety),
                              a.transverse_shear, float(a.shear_factor), float(a.wrinkling_coefficient),
                              int(a.hot_spots), bool(a.check_ranges),
                              tuple(DefaultUsed(m, c, text) for m, notes in summary.get("defaults", {}).items()
                                    for c, text in notes.items()), **analysis_extras(a)),
        materials=tuple(material_info(m) for m in defn.materials.values()),
        sections=tuple(section_info(i, n, s) for i, (n, s) in enumerate(zip(model.section_names, model.sections))),
        zones=tuple(ZoneInfo(z.name, z.laminate, section_of_zone[k], int(counts[k])) for k, z in enumerate(defn.zones)),
        cases=case_infos(defn, plan, step_names),
        criteria=tuple(CriterionInfo(c.name, tuple(c.modes)) for c in CRITERIA),
        summary=RunSummary.from_result(summary))
