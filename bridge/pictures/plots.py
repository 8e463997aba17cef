"""Figures of a results store: through-thickness profile, polar moduli and failure envelopes."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from shells.criteria import by_name, failure_index
from shells.errors import InputError, StoreError

from bridge.atomic import atomic_path
from bridge.pictures.fields import FieldError, case_index
from bridge.results.store import StoreReader


def _section_of_cell(st: StoreReader, cell: int):
    """The :class:`postproc.run_meta.SectionInfo` of a cell."""
    return st.run.sections[int(st.h5["model/section"][cell])]


def _ply_params(st: StoreReader, section: int) -> np.ndarray:
    """The kernel property vectors (nply, NPARAM) the run used for a section's plies (from /sections)."""
    g = st.h5["sections"]
    first, n = int(g["first"][section]), int(g["nply"][section])
    return g["params"][first:first + n]


def _cell_case(st: StoreReader, cell: int | None, case: str | None) -> tuple[int, int]:
    n = st.h5["cells/min_margin"].shape[0]
    worst = st.run.summary.worst
    cell = (worst.cell if worst else 0) if cell is None else int(cell)
    if not 0 <= cell < n:
        raise FieldError(f"--cell {cell}: the store has cells 0 … {n - 1}", st.path)
    if case is None:
        k = int(st.h5["cells/case"][cell])
        return cell, max(k, 0)
    k = case_index(st, case)
    return cell, 0 if k is None else k


def _not_rebuilt(case) -> str:
    """Why the run's split of a case into a scaled and a fixed part cannot be rebuilt from /plies, or ''."""
    if case.held or case.held_steps:
        return f"case {case.name} holds the resultants of {', '.join(case.held) or 'a held case'} fixed"
    for what, name in (("temperature change", case.temperature_field), ("moisture change", case.moisture_field),
                       ("pressure", case.pressure_field)):
        if name is not None:
            return f"case {case.name} takes its {what} from the mesh array '{name}'"
    if case.environment is not None:
        return (f"case {case.name} is checked in environment '{case.environment}', whose allowables /sections does "
                "not keep")
    return ""


def _plies_route(st: StoreReader, cell: int, k: int, sec) -> tuple[np.ndarray, dict, str]:
    """(total stress (nply, 3, 5), failure indices, note) of a cell from /plies.

    /plies keeps the total state only, while the run scales the mechanical part and holds the fixed part. The
    fixed part is rebuilt here exactly as the run built it when the case's fixed part is its uniform ΔT and ΔM
    (the same function on the section tables of /sections, knockdowns and in-situ strengths included; σ3 is
    the case's −pressure), and every criterion is then evaluated as in the run (face-level ones on each face's
    mean stress). A case that holds resultants, or takes ΔT from a mesh array, cannot be split again without
    the inputs: its failure indices are left out, and the note says why.
    """
    from postproc.states import ratios_of_states
    from shells.recovery_reference import ply_states

    nply = len(sec.plies)
    total = np.zeros((nply, 3, 6))
    total[..., :3] = st.h5["plies/stress"][k, cell, :nply]
    total[..., 3:5] = st.h5["plies/transverse_shear"][k, cell, :nply]
    case = st.run.cases[k]
    why = _not_rebuilt(case)
    if why:
        return total[..., :5], {}, (f"failure indices not shown: {why}, and the run's inputs are gone; restore "
                                    "them (or plot a hot-spot cell) to see them")
    tables = st.tables()
    sec_id = np.array([sec.id], dtype=np.int64)
    phi = np.array([float(st.h5["model/material_angle"][cell])])
    fixed = ply_states(tables, sec_id, phi, np.zeros((1, 1, 8)), np.array([[case.delta_T]]),
                       np.array([case.delta_M]), np.zeros(1))["fixed"]
    mech = np.zeros_like(fixed)
    mech[0, 0, :nply] = total - np.nan_to_num(fixed[0, 0, :nply])
    mech[0, 0, :nply, :, 5] = -case.pressure
    crit = [by_name(n) for n in st.run.criteria_used]
    ratio = ratios_of_states(crit, tables, sec_id, {"mech": mech, "fixed": fixed})
    fi = {c.name: failure_index(ratio[j, 0, 0, :nply]) for j, c in enumerate(crit)}
    return total[..., :5], fi, ""


def _applicable(st: StoreReader, sec, kinds: tuple[str, ...]) -> tuple[set[str], list[str]]:
    """(criteria of the run that apply to a section, those that do not): a point criterion applies when some
    ply's material kind is one it checks, a face-level one when the section has sandwich faces."""
    from shells.params import KIND_NAMES

    codes = {KIND_NAMES.index(k) for k in kinds}
    faces = int(st.h5["sections/face_count"][sec.id]) > 0
    yes, no = set(), []
    for name in st.run.criteria_used:
        c = by_name(name)
        applies = faces if c.level == "face" else bool(codes & set(c.requires))
        (yes.add(name) if applies else no.append(name))
    return yes, no


def profile_of(st: StoreReader, cell: int | None = None, case: str | None = None):
    """(Profile, cell, case name, source) of a cell (default the worst) in a case (default its governing one).

    ``source`` is ``stored`` (a hot spot or a zone's worst cell: /hotspots), ``recovered`` (the cell recovered
    again from the run's inputs) or ``plies`` (from /plies when the inputs are gone: the failure indices as
    the run computes them where the fixed part can be rebuilt, else none, with a note; :func:`_plies_route`).
    Criteria that do not apply to the cell's section (core criteria on a monolithic wall) are left out and named
    in the profile's notes.
    """
    from postproc.profile import Profile

    from bridge.pictures.cellstate import cell_states
    from bridge.results.verified import AlteredStoreError

    cell, k = _cell_case(st, cell, case)
    sec = _section_of_cell(st, cell)
    kind = {m.name: m.kind for m in st.run.materials}
    plies, kinds = sec.plies, tuple(kind.get(p.material, "ply") for p in sec.plies)
    zi = np.asarray(sec.interfaces)
    info = st.run.cases[k]
    applies, other = _applicable(st, sec, kinds)
    notes = [f"not applicable to this section: {', '.join(other)}"] if other else []
    try:
        s = cell_states(st, cell)
    except StoreError as err:
        if isinstance(err, AlteredStoreError):
            raise
        if not st.has("plies"):
            raise FieldError(f"cell {cell} is not stored in full and cannot be recovered again: {err.detail}",
                             st.path) from None
        stress, fi, note = _plies_route(st, cell, k, sec)
        z = np.column_stack([zi[:-1], 0.5 * (zi[:-1] + zi[1:]), zi[1:]])
        notes = ["states from the store's /plies (the run's inputs are not available)", *([note] if note else []),
                 *notes]
        fi = {n: v for n, v in fi.items() if n in applies}
        return (Profile(z, stress, fi, zi, plies, kinds, info.factor_of_safety, tuple(notes)), cell,
                st.case_names[k], "plies")
    total = s.mech[k] + s.fixed[k]
    fi = {name: failure_index(r[k]) for name, r in s.ratio.items() if name in applies}
    return (Profile(s.z, total[..., :5], fi, zi, plies, kinds, info.factor_of_safety, tuple(notes)), cell,
            st.case_names[k], s.source)


def profile_figure_of(st: StoreReader, cell: int | None = None, case: str | None = None,
                      axis: str | None = None):
    """(figure, what was plotted) of the through-thickness profile of a cell."""
    from postproc.profile import profile_figure

    prof, cell, name, source = profile_of(st, cell, case)
    zone = st.run.zones[int(st.h5["model/zone"][cell])].name
    laminate = _section_of_cell(st, cell).laminate
    axis = axis or prof.default_axis()
    try:
        fig = profile_figure(prof, title=f"Through the thickness: cell {cell} (zone {zone}, laminate {laminate}), "
                             f"case {name}", stress_unit=st.run.label("stress"), length_unit=st.run.label("length"),
                             axis=axis)
    except ValueError as err:
        raise FieldError(f"--kind profile --cell {cell} --case {name}: {err}", st.path) from None
    return fig, {"cell": cell, "case": name, "zone": zone, "laminate": laminate, "axis": axis, "source": source,
                 "plies": len(prof.plies), "criteria": ",".join(prof.failure_index) or "none",
                 "note": list(prof.notes)}


@dataclass(frozen=True)
class StoredStiffness:
    """A section's stiffness as stored: what :func:`shells.engineering.polar_moduli` reads (about the reference
    surface, moved to the mid-plane there by the offset)."""

    A: np.ndarray
    B: np.ndarray
    D: np.ndarray
    thickness: float
    offset: float


def _polar(st: StoreReader, laminate: str | None):
    from postproc.plots import polar_figure
    from shells.engineering import polar_moduli

    sections = st.run.sections
    names = [s.laminate for s in sections]
    laminate = names[0] if laminate is None else laminate
    if laminate not in names:
        raise FieldError(f"--laminate {laminate!r} is not in the store; use one of: {', '.join(dict.fromkeys(names))}",
                         st.path)
    sec = sections[names.index(laminate)]
    # polar_moduli reads A, B, D, the thickness and the offset only: the stored stiffness, nothing rebuilt.
    stiffness = StoredStiffness(*(st.section_matrix(k, sec.id) for k in "ABD"), sec.thickness, sec.offset)
    angles = np.linspace(0.0, 360.0, 361)
    e = polar_moduli(stiffness, angles)
    fig = polar_figure(angles, e["membrane"], e["flexural"], title=f"Laminate {laminate}", unit=st.run.label("stress"))
    return fig, {"laminate": laminate}


def _plies_text(numbers: list[int]) -> str:
    """``ply 3`` or ``plies 1, 2, 8``."""
    return f"ply {numbers[0]}" if len(numbers) == 1 else f"plies {', '.join(map(str, numbers))}"


def _envelope_params(st: StoreReader, material: str,
                     cell: int | None) -> tuple[list[tuple[list[int], np.ndarray]], str]:
    """The property vectors the run used for ``material``, as (ply numbers, vector) groups, and what they hold.

    With a cell: the vectors of the cell's plies of that material (/sections: knockdown and in-situ strengths
    by ply position as the run applied them), plies with equal vectors grouped. Without one, or when the cell has
    no ply of the material: the material's vector with its knockdown applied (in-situ strengths, if any, those
    of a thick embedded ply).
    """
    from shells.params import knocked_down

    info = st.run.material(material)
    held = f"allowables × knockdown {info.knockdown:.4g}" if info.knockdown != 1.0 else "allowables as given"
    if cell is not None:
        sec = _section_of_cell(st, cell)
        rows = _ply_params(st, sec.id)
        groups: list[tuple[list[int], np.ndarray]] = []
        for i, q in enumerate(sec.plies):
            if q.material != material:
                continue
            same = next((g for g in groups if np.array_equal(g[1], rows[i], equal_nan=True)), None)
            (same[0].append(i + 1) if same else groups.append(([i + 1], rows[i])))
        if groups:
            return groups, f"{held}, as the run used them in cell {cell}"
    return [([], knocked_down(st.material_params(material), info.knockdown))], f"{held}, as the run used them"


def _envelope(st: StoreReader, material: str | None, criteria: str | None, cell: int | None):
    from postproc.plots import ENVELOPE_PLANES, drawable, envelope_figure, trace_envelope

    mats = [m.name for m in st.run.materials]
    material = mats[0] if material is None else material
    if material not in mats:
        raise FieldError(f"--material {material!r} is not in the store; use one of: {', '.join(mats)}", st.path)
    names = list(st.run.criteria_used) if not criteria else [c.strip() for c in criteria.split(",")]
    # Face-level criteria (wrinkling, dimpling) act on a sandwich face's mean stress, never on one ply's state.
    face = [n for n in names if by_name(n).level == "face"]
    names = [n for n in names if n not in face]
    note = f"{', '.join(face)}: checked on a sandwich face's mean stress, not a ply's state; no ply envelope"
    if not names:
        raise FieldError(f"--kind envelope: {note}; choose other --criteria", st.path)
    states, label = None, ""
    if cell is not None:
        prof, cell, case, _ = profile_of(st, cell, None)
        plies = [i for i, q in enumerate(_section_of_cell(st, cell).plies) if q.material == material]
        states = np.concatenate([np.pad(prof.stress[i], ((0, 0), (0, 1))) for i in plies]) if plies else None
        label = f"cell {cell}, case {case}: plies of {material}"
    groups, held = _envelope_params(st, material, cell)
    curves = {}
    for n in names:
        traced: list[tuple[list[int], list[np.ndarray]]] = []
        for numbers, p in groups:
            pair = [trace_envelope(by_name(n).ratio, p, plane) for plane, _, _ in ENVELOPE_PLANES]
            same = next((t for t in traced if all(np.allclose(a, b, equal_nan=True) for a, b in zip(t[1], pair))),
                        None)
            (same[0].extend(numbers) if same else traced.append((list(numbers), pair)))
        for numbers, pair in traced:
            curves[n if len(traced) == 1 else f"{n} ({_plies_text(numbers)})"] = pair
    try:
        fig = envelope_figure(curves, states, title=f"Failure envelopes of {material} ({held})",
                              unit=st.run.label("stress"), states_label=label)
    except ValueError as err:
        raise FieldError(f"--kind envelope --material {material}: {err}; choose a ply material or other "
                         "--criteria", st.path) from None
    return fig, {"material": material, "criteria": ",".join(drawable(curves)),
                 **({"cell": cell} if cell is not None else {}), "allowables": held, **({"note": note} if face else {})}


def plot_store(store_path: str | Path, output: str | Path, kind: str = "profile", cell: int | None = None,
               case: str | None = None, laminate: str | None = None, material: str | None = None,
               criteria: str | None = None, axis: str | None = None) -> dict:
    """Write a profile, polar or envelope figure of the store to ``output`` (.png or .svg, atomically).

    Returns
    -------
    dict
        ``output``, ``kind`` and what was plotted (cell, case, zone, laminate, axis, source of the states; the
        laminate of a polar plot; the material and criteria of an envelope).
    """
    from postproc.plots import save_figure

    fmt = Path(output).suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise InputError("write a .png or .svg figure", str(output))
    if axis not in (None, "index", "z"):
        raise InputError(f"--axis {axis!r}: use index (each ply the same height) or z (true z)")
    with StoreReader(store_path) as st:
        if kind == "profile":
            fig, info = profile_figure_of(st, cell, case, axis)
        elif kind == "polar":
            fig, info = _polar(st, laminate)
        elif kind == "envelope":
            fig, info = _envelope(st, material, criteria, cell)
        else:
            raise InputError(f"--kind {kind!r}: use profile, polar or envelope")
    with atomic_path(output) as tmp:
        save_figure(fig, tmp, fmt)
    return {"output": str(output), "kind": kind, **info}
