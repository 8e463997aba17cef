"""Figures of a results store: through-thickness profile, polar moduli and failure envelopes."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from shells.errors import InputError

from bridge.atomic import atomic_path
from bridge.pictures.render import FieldError, _case_index
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
    k = _case_index(st, case)
    return cell, 0 if k is None else k


def profile_of(st: StoreReader, cell: int | None = None, case: str | None = None):
    """(Profile, cell, case name) of a cell (default the worst) in a case (default its governing one).

    From /hotspots when the cell is a hot spot (exact failure indices, thermal part held), else from /plies
    (failure indices of the stored total state, nothing held).
    """
    from postproc.plots import Profile
    from shells.criteria import by_name, failure_index

    cell, k = _cell_case(st, cell, case)
    sec = _section_of_cell(st, cell)
    nply = len(sec.plies)
    labels = [f"ply {i + 1}: {p.angle:g}° {p.material}" for i, p in enumerate(sec.plies)]
    hot = list(st.array("hotspots/cell")) if st.has("hotspots/cell") else []
    if cell in hot:
        h = hot.index(cell)
        total = st.h5["hotspots/mech"][k, h, :nply] + st.h5["hotspots/fixed"][k, h, :nply]
        names = [c.decode() if isinstance(c, bytes) else str(c) for c in st.array("hotspots/criteria")]
        fi = {n: failure_index(st.h5["hotspots/ratio"][j, k, h, :nply]) for j, n in enumerate(names)}
        z = st.h5["hotspots/z"][h, :nply]
        return Profile(z, total[..., :5], fi, np.asarray(sec.interfaces), labels), cell, st.case_names[k]
    if not st.has("plies"):
        raise FieldError(f"cell {cell} is not a hot spot and the store has no /plies; run plybridge recover "
                         "with --store plies (or plot a hot-spot cell)", st.path)
    state = np.zeros((nply, 3, 6))
    state[..., :3] = st.h5["plies/stress"][k, cell, :nply]
    state[..., 3:5] = st.h5["plies/transverse_shear"][k, cell, :nply]
    params = _ply_params(st, sec.id)
    fi = {}
    for name in st.run.criteria_used:
        ratio = by_name(name).ratio
        fi[name] = failure_index(np.array([[ratio(state[i, j], np.zeros(6), params[i])[0] for j in range(3)]
                                           for i in range(nply)]))
    zi = np.asarray(sec.interfaces)
    z = np.column_stack([zi[:-1], 0.5 * (zi[:-1] + zi[1:]), zi[1:]])
    return Profile(z, state[..., :5], fi, zi, labels), cell, st.case_names[k]


def _stress_unit(st: StoreReader) -> str:
    return st.run.label("stress")


def profile_figure_of(st: StoreReader, cell: int | None = None, case: str | None = None):
    from postproc.plots import profile_figure

    prof, cell, name = profile_of(st, cell, case)
    zone = st.run.zones[int(st.h5["model/zone"][cell])].name
    return profile_figure(prof, title=f"Through-thickness: cell {cell} ({zone}, laminate "
                          f"{_section_of_cell(st, cell).laminate}), case {name}", stress_unit=_stress_unit(st))


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
    return polar_figure(angles, e["membrane"], e["flexural"], title=f"Laminate {laminate}", unit=_stress_unit(st))


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
        prof, cell, case = profile_of(st, cell, None)
        plies = [i for i, q in enumerate(_section_of_cell(st, cell).plies) if q.material == material]
        states = np.concatenate([np.pad(prof.stress[i], ((0, 0), (0, 1))) for i in plies]) if plies else None
        label = f"cell {cell}, case {case}: plies of {material}"
    return envelope_figure(curves, states, title=f"Failure envelopes of {material}", unit=_stress_unit(st),
                           states_label=label)


def plot_store(store_path: str | Path, output: str | Path, kind: str = "profile", cell: int | None = None,
               case: str | None = None, laminate: str | None = None, material: str | None = None,
               criteria: str | None = None) -> None:
    """Write a profile, polar or envelope figure of the store to ``output`` (.png or .svg, atomically)."""
    from postproc.plots import save_figure

    fmt = Path(output).suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise InputError("write a .png or .svg figure", str(output))
    with StoreReader(store_path) as st:
        if kind == "profile":
            fig = profile_figure_of(st, cell, case)
        elif kind == "polar":
            fig = _polar(st, laminate)
        elif kind == "envelope":
            fig = _envelope(st, material, criteria, cell)
        else:
            raise InputError(f"--kind {kind!r}: use profile, polar or envelope")
    with atomic_path(output) as tmp:
        save_figure(fig, tmp, fmt)
