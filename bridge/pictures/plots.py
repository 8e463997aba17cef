"""Figures of a results store: through-thickness profile, polar moduli and failure envelopes."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

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


def _plies_route(st: StoreReader, cell: int, k: int, sec) -> tuple[np.ndarray, dict]:
    """(total stress (nply, 3, 5), failure indices) of a cell from /plies (nothing held fixed)."""
    from shells.criteria import by_name, failure_index

    nply = len(sec.plies)
    state = np.zeros((nply, 3, 6))
    state[..., :3] = st.h5["plies/stress"][k, cell, :nply]
    state[..., 3:5] = st.h5["plies/transverse_shear"][k, cell, :nply]
    params = _ply_params(st, sec.id)
    fi = {}
    for name in st.run.criteria_used:
        ratio = by_name(name).ratio
        fi[name] = failure_index(np.array([[ratio(state[i, j], np.zeros(6), params[i])[0] for j in range(3)]
                                           for i in range(nply)]))
    return state[..., :5], fi


def profile_of(st: StoreReader, cell: int | None = None, case: str | None = None):
    """(Profile, cell, case name, source) of a cell (default the worst) in a case (default its governing one).

    ``source`` is ``stored`` (a hot spot or a zone's worst cell: /hotspots), ``recovered`` (the cell recovered
    again from the run's inputs) or ``plies`` (from /plies when the inputs are gone: failure indices of the
    stored total state, nothing held fixed).
    """
    from postproc.profile import Profile
    from shells.criteria import failure_index

    from bridge.pictures.cellstate import cell_states

    cell, k = _cell_case(st, cell, case)
    sec = _section_of_cell(st, cell)
    kind = {m.name: m.kind for m in st.run.materials}
    plies, kinds = sec.plies, tuple(kind.get(p.material, "ply") for p in sec.plies)
    zi = np.asarray(sec.interfaces)
    try:
        s = cell_states(st, cell)
    except StoreError as err:
        if not st.has("plies"):
            raise FieldError(f"cell {cell} is not stored in full and cannot be recovered again: {err.detail}",
                             st.path) from None
        stress, fi = _plies_route(st, cell, k, sec)
        z = np.column_stack([zi[:-1], 0.5 * (zi[:-1] + zi[1:]), zi[1:]])
        return Profile(z, stress, fi, zi, plies, kinds), cell, st.case_names[k], "plies"
    total = s.mech[k] + s.fixed[k]
    fi = {name: failure_index(r[k]) for name, r in s.ratio.items()}
    return Profile(s.z, total[..., :5], fi, zi, plies, kinds), cell, st.case_names[k], s.source


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
                 "plies": len(prof.plies)}


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


def _envelope(st: StoreReader, material: str | None, criteria: str | None, cell: int | None):
    from postproc.plots import ENVELOPE_PLANES, envelope_figure, trace_envelope
    from shells.criteria import by_name

    mats = [m.name for m in st.run.materials]
    material = mats[0] if material is None else material
    if material not in mats:
        raise FieldError(f"--material {material!r} is not in the store; use one of: {', '.join(mats)}", st.path)
    names = list(st.run.criteria_used) if not criteria else [c.strip() for c in criteria.split(",")]
    p = st.material_params(material)
    curves = {n: [trace_envelope(by_name(n).ratio, p, plane) for plane, _, _ in ENVELOPE_PLANES] for n in names}
    states, label = None, ""
    if cell is not None:
        prof, cell, case, _ = profile_of(st, cell, None)
        plies = [i for i, q in enumerate(_section_of_cell(st, cell).plies) if q.material == material]
        states = np.concatenate([np.pad(prof.stress[i], ((0, 0), (0, 1))) for i in plies]) if plies else None
        label = f"cell {cell}, case {case}: plies of {material}"
    try:
        fig = envelope_figure(curves, states, title=f"Failure envelopes of {material}", unit=st.run.label("stress"),
                              states_label=label)
    except ValueError as err:
        raise FieldError(f"--kind envelope --material {material}: {err}; choose a ply material or other "
                         "--criteria", st.path) from None
    return fig, {"material": material, "criteria": ",".join(curves), "cell": cell}


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
