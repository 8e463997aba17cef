"""Pictures of a results store: pick a field (store → arrays), draw it (postproc.render), write it atomically.

Field selection (docs/pictures.md): ``--ply envelope`` is the per-cell value at
the critical ply (the minimum over plies); ``--case envelope`` the governing
case. A stress or strain component needs ``/plies``; at the envelope it is the
governing state (critical ply, case and point), otherwise the extreme over the
ply's three points (sign kept).
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from shells.errors import InputError

from .atomic import atomic_path
from .store import StoreReader

SCALAR_FIELDS = ("margin", "strength-ratio", "critical-ply", "criterion", "mode", "case")
#: Component name → (dataset under /plies, component index, symbol; ASCII: VTK's fonts lack Greek).
COMPONENTS = {"stress:s1": ("stress", 0, "sigma1"), "stress:s2": ("stress", 1, "sigma2"), "stress:s12": ("stress", 2, "tau12"),
              "stress:s13": ("transverse_shear", 0, "tau13"), "stress:s23": ("transverse_shear", 1, "tau23"),
              "strain:e1": ("strain", 0, "eps1"), "strain:e2": ("strain", 1, "eps2"), "strain:e12": ("strain", 2, "gamma12")}
FIELDS = SCALAR_FIELDS + tuple(COMPONENTS)
#: Stress unit of each force-length system.
STRESS_UNITS = {"N-mm": "MPa", "N-m": "Pa", "lbf-in": "psi"}


@dataclass(frozen=True)
class Field:
    """A field ready to draw: values per cell, how to colour them, and the words around them."""

    name: str
    values: np.ndarray
    kind: str
    labels: tuple | None
    title: str
    bar_title: str
    mark: int | None
    mark_label: str | None
    cap: float | None = None


#: Margins above this take the end colour of the map, so the low margins keep the colour range.
MARGIN_CAP = 2.0


class FieldError(InputError):
    """A --field / --ply / --case combination the store cannot answer."""


def _ply_index(st: StoreReader, ply: str | int) -> int | None:
    if str(ply) == "envelope":
        return None
    n = st.h5["envelope/margin"].shape[1]
    try:
        k = int(ply)
    except ValueError:
        raise FieldError(f"--ply {ply!r}: give a ply number 1 … {n} or 'envelope'", st.path) from None
    if not 1 <= k <= n:
        raise FieldError(f"--ply {k}: the store has plies 1 … {n}; give one of those or 'envelope'", st.path)
    return k - 1


def _case_index(st: StoreReader, case: str) -> int | None:
    if case == "envelope":
        return None
    names = st.case_names
    if case not in names:
        raise FieldError(f"--case {case!r} is not in the store; use 'envelope' or one of: {', '.join(names)}",
                         st.path)
    return names.index(case)


def mode_labels(st: StoreReader) -> tuple[list[str], dict[tuple[int, int], int]]:
    """Labels ``"criterion: mode"`` of every mode of the criteria used, and (criterion code, mode) → label index."""
    table = st.meta("criteria")
    codes = {name: i for i, name in enumerate(table)}
    labels, index = [], {}
    for name in st.meta("criteria_used"):
        for m, mode in enumerate(table[name]):
            index[(codes[name], m)] = len(labels)
            labels.append(f"{name}: {mode}")
    return labels, index


def _categories(st: StoreReader, field: str, codes: np.ndarray, modes: np.ndarray | None) -> tuple[np.ndarray, list]:
    if field == "critical-ply":
        n = st.h5["envelope/margin"].shape[1]
        return np.where(codes > 0, codes - 1, -1), [f"ply {k}" for k in range(1, n + 1)]
    if field == "criterion":
        return codes, list(st.meta("criteria"))
    if field == "case":
        return codes, list(st.case_names)
    labels, index = mode_labels(st)
    full = np.array([index.get((int(c), int(m)), -1) for c, m in zip(codes, modes)], dtype=int)
    present = sorted(set(full[full >= 0].tolist()))  # only the modes that occur: few, distinct colours
    compact = {old: new for new, old in enumerate(present)}
    return np.array([compact.get(v, -1) for v in full]), [labels[i] for i in present]


def _component(st: StoreReader, field: str, ply: int | None, case: int | None) -> np.ndarray:
    if not st.has("plies"):
        raise FieldError(f"--field {field} needs ply stresses and strains (/plies); run plybridge recover with "
                         "--store plies", st.path)
    group, comp, _ = COMPONENTS[field]
    data = st.h5[f"plies/{group}"]
    n = data.shape[1]
    cells = np.arange(n)
    if ply is None:
        crit = st.array("cells/critical_ply")
        plies = np.where(crit > 0, crit - 1, 0)
    else:
        plies = np.full(n, ply)
    source = "cells" if ply is None else "envelope"
    if case is None:
        cases = st.array(f"{source}/case") if ply is None else st.array("envelope/case")[:, ply]
        points = st.array("cells/point") if ply is None else st.array("envelope/point")[:, ply]
        ok = (cases >= 0) & (points >= 0)
        full = data[()]
        out = full[np.where(ok, cases, 0), cells, plies, np.where(ok, points, 0), comp]
        return np.where(ok, out, np.nan)
    through = data[case][cells, plies, :, comp]  # (ncell, 3 points)
    pick = np.nanargmax(np.where(np.isnan(through), -1.0, np.abs(through)), axis=1)
    return through[cells, pick]


def select_field(st: StoreReader, field: str = "margin", ply: str | int = "envelope",
                 case: str = "envelope") -> Field:
    """Values per cell of ``field`` at ``ply`` (number or ``envelope``) and ``case`` (name or ``envelope``)."""
    if field not in FIELDS:
        raise FieldError(f"--field {field!r}: use one of {', '.join(FIELDS)}", st.path)
    k, c = _ply_index(st, ply), _case_index(st, case)
    where = ("critical ply" if k is None else f"ply {k + 1}") + ", " + (
        "envelope of cases" if c is None else f"case {case}")
    margin = st.array("cells/min_margin")
    flagged = st.array("cells/flagged")
    if field in COMPONENTS:
        values = _component(st, field, k, c)
        unit = "-" if field.startswith("strain") else STRESS_UNITS.get(str(st.meta("units")), "force/length²")
        symbol = COMPONENTS[field][2]
        worst = int(np.nanargmax(np.abs(np.where(np.isnan(values), 0.0, values)))) if np.isfinite(values).any() \
            else None
        suffix = "" if unit == "-" else f" {unit}"
        label = None if worst is None else f"{symbol} {values[worst]:.4g}{suffix} (cell {worst})"
        return Field(field, values, "diverging", None, f"{symbol}: {where}", f"{symbol} [{unit}]", worst, label)
    if field in ("margin", "strength-ratio"):
        if c is not None and k is not None:
            raise FieldError(f"--field {field} with both --ply and --case: the store keeps margins per ply over "
                             "all cases, or per case over all plies; set one of them to 'envelope'", st.path)
        if field == "strength-ratio" and c is not None:
            raise FieldError("--field strength-ratio --case NAME: strength ratios are stored at the governing "
                             "case only; use --field margin for one case", st.path)
        name = "margin" if field == "margin" else "strength_ratio"
        if c is not None:
            values = st.array("cells/case_margin")[:, c]
        elif k is not None:
            values = st.array(f"envelope/{name}")[:, k]
        else:
            values = margin if name == "margin" else st.array("cells/strength_ratio")
        values = np.where(flagged & ~np.isfinite(values), np.nan, values)
        finite = np.isfinite(values)
        worst = int(np.argmin(np.where(finite, values, np.inf))) if finite.any() else None
        symbol = "MS" if field == "margin" else "R"
        label = None if worst is None else f"{symbol} {values[worst]:.3g} (cell {worst})"
        what = "Margin of safety" if field == "margin" else "Strength ratio"
        kind = "diverging" if field == "margin" else "sequential"
        cap = MARGIN_CAP if field == "margin" and np.nanmax(np.where(finite, values, -np.inf), initial=0) > \
            MARGIN_CAP else None
        bar = f"{symbol} [-]" + (f" (>= {MARGIN_CAP:g} at top)" if cap else "")
        return Field(field, values, kind, None, f"{what}: {where}, all criteria", bar, worst, label, cap)
    if c is not None:
        raise FieldError(f"--field {field} is stored for the envelope of cases only; use --case envelope", st.path)
    src = "cells" if k is None else "envelope"
    pick = (lambda a: a) if k is None else (lambda a: a[:, k])
    dataset = {"critical-ply": "critical_ply", "criterion": "criterion", "case": "case", "mode": "criterion"}[field]
    if field == "critical-ply" and k is not None:
        raise FieldError("--field critical-ply is a per-cell field; use --ply envelope", st.path)
    codes = pick(st.array(f"{src}/{dataset}"))
    modes = pick(st.array(f"{src}/mode")) if field == "mode" else None
    values, labels = _categories(st, field, codes, modes)
    finite = np.isfinite(margin)
    worst = int(np.argmin(np.where(finite, margin, np.inf))) if finite.any() else None
    label = None
    if worst is not None and 0 <= values[worst] < len(labels):
        label = f"{labels[values[worst]]} (MS {margin[worst]:.3g})"
    title = f"{field.replace('-', ' ').capitalize()}: {where}"
    return Field(field, values.astype(float), "categorical", tuple(labels), title, field, worst, label)


def save_png(path: str | Path, image: np.ndarray) -> None:
    """Write an RGB array as a PNG file atomically."""
    with atomic_path(path, suffix=".png") as tmp:
        tmp.write_bytes(png_bytes(image))


def png_bytes(image: np.ndarray) -> bytes:
    """PNG encoding of an RGB array (matplotlib's writer)."""
    import matplotlib.image as mpimg

    buf = io.BytesIO()
    mpimg.imsave(buf, np.asarray(image), format="png")
    return buf.getvalue()


#: Named view looking at the marked (worst) cell along its normal, from the side the normal points to.
WORST_VIEW = "worst"


def worst_view(st: StoreReader, points: np.ndarray, blocks, cell: int | None):
    """Explicit camera (position, focal point, view-up) facing ``cell``; the iso view when there is none."""
    if cell is None:
        return "iso"
    start = 0
    for _, c in blocks:
        if cell < start + len(c):
            centre = points[c[cell - start]].mean(axis=0)
            break
        start += len(c)
    n = np.asarray(st.h5["model/normal"][cell], dtype=float)
    span = float(np.linalg.norm(points.max(axis=0) - points.min(axis=0))) or 1.0
    up = np.array([0.0, 0.0, 1.0]) if abs(n[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
    up = up - n * (up @ n)
    return (tuple(centre + 2.2 * span * n), tuple(centre), tuple(up / np.linalg.norm(up)))


def draw_store_field(st: StoreReader, field: str = "margin", ply: str | int = "envelope", case: str = "envelope",
                     views=("iso",), size=(1200, 900)):
    """(Field, postproc.render.Picture) of a field of an open store."""
    from postproc.render import draw_field

    f = select_field(st, field, ply, case)
    points, blocks = st.mesh()
    views = [worst_view(st, points, blocks, f.mark) if v == WORST_VIEW else v for v in views]
    title = f"{st.meta('title') or Path(st.path).stem}\n{f.title}"
    pic = draw_field(points, blocks, f.values, kind=f.kind, labels=f.labels, title=title, bar_title=f.bar_title,
                     views=tuple(views), size=tuple(size), mark=f.mark, mark_label=f.mark_label, cap=f.cap)
    return f, pic


def render_store(store_path: str | Path, output: str | Path, field: str = "margin", ply: str | int = "envelope",
                 case: str = "envelope", views=("iso",), size=(1200, 900), cell_data: str | Path | None = None) -> dict:
    """Render a field of the store to a PNG (and optionally the same field as cell data of a mesh file).

    Returns
    -------
    dict
        ``field``, ``kind``, ``cell`` (the marked worst cell or None), ``value`` (its value; a category name for
        categorical fields), ``legend`` (list of [label, colour]) and ``output``.
    """
    if not str(output).lower().endswith(".png"):
        raise InputError("write a .png picture (give -o NAME.png)", str(output))
    with StoreReader(store_path) as st:
        f, pic = draw_store_field(st, field, ply, case, views, size)
        points, blocks = st.mesh()
    save_png(output, pic.image)
    if cell_data is not None:
        from .formats import write_mesh
        from .mesh import shell_mesh_from_blocks

        write_mesh(cell_data, shell_mesh_from_blocks(points, blocks), {f.name.replace(":", "_"): f.values})
    value = None
    if f.mark is not None:
        v = f.values[f.mark]
        value = f.labels[int(v)] if f.kind == "categorical" else float(v)
    return {"field": f.name, "kind": f.kind, "cell": f.mark, "value": value,
            "legend": [list(e) for e in pic.legend], "output": str(output)}



# --------------------------------------------------------------------------- plots

def _section_meta(st: StoreReader, cell: int) -> dict:
    return st.meta("sections")[int(st.h5["model/section"][cell])]


def rebuild_section(st: StoreReader, sec: dict):
    """The :class:`shells.section.Section` of a store's section entry (materials rebuilt from the metadata)."""
    from shells.laminate import Laminate, Ply
    from shells.section import build_section

    from .store import materials_from_meta

    mats = materials_from_meta(st.meta("materials"))
    lam = Laminate(sec["laminate"], tuple(Ply(mats[p["material"]], float(p["angle"]), float(p["thickness"]))
                                          for p in sec["plies"]), float(sec.get("offset", 0.0)))
    a = st.meta("analysis") or {}
    return build_section(lam, a.get("transverse_shear", "equilibrium"), a.get("shear_factor", 5.0 / 6.0),
                         a.get("wrinkling_coefficient", 0.5))


def _cell_case(st: StoreReader, cell: int | None, case: str | None) -> tuple[int, int]:
    n = st.h5["cells/min_margin"].shape[0]
    cell = int((st.meta("summary") or {}).get("worst", {}).get("cell", 0)) if cell is None else int(cell)
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
    sec = _section_meta(st, cell)
    nply = len(sec["plies"])
    labels = [f"ply {i + 1}: {p['angle']:g}° {p['material']}" for i, p in enumerate(sec["plies"])]
    hot = list(st.array("hotspots/cell")) if st.has("hotspots/cell") else []
    if cell in hot:
        h = hot.index(cell)
        total = st.h5["hotspots/mech"][k, h, :nply] + st.h5["hotspots/fixed"][k, h, :nply]
        names = [c.decode() if isinstance(c, bytes) else str(c) for c in st.array("hotspots/criteria")]
        fi = {n: failure_index(st.h5["hotspots/ratio"][j, k, h, :nply]) for j, n in enumerate(names)}
        z = st.h5["hotspots/z"][h, :nply]
        return Profile(z, total[..., :5], fi, np.asarray(sec["z"]), labels), cell, st.case_names[k]
    if not st.has("plies"):
        raise FieldError(f"cell {cell} is not a hot spot and the store has no /plies; run plybridge recover "
                         "with --store plies (or plot a hot-spot cell)", st.path)
    state = np.zeros((nply, 3, 6))
    state[..., :3] = st.h5["plies/stress"][k, cell, :nply]
    state[..., 3:5] = st.h5["plies/transverse_shear"][k, cell, :nply]
    params = rebuild_section(st, sec).ply_params
    fi = {}
    for name in st.meta("criteria_used"):
        ratio = by_name(name).ratio
        fi[name] = failure_index(np.array([[ratio(state[i, j], np.zeros(6), params[i])[0] for j in range(3)]
                                           for i in range(nply)]))
    zi = np.asarray(sec["z"])
    z = np.column_stack([zi[:-1], 0.5 * (zi[:-1] + zi[1:]), zi[1:]])
    return Profile(z, state[..., :5], fi, zi, labels), cell, st.case_names[k]


def _stress_unit(st: StoreReader) -> str:
    return STRESS_UNITS.get(str(st.meta("units")), "force/length²")


def profile_figure_of(st: StoreReader, cell: int | None = None, case: str | None = None):
    from postproc.plots import profile_figure

    prof, cell, name = profile_of(st, cell, case)
    zone = st.meta("zones")[int(st.h5["model/zone"][cell])]
    return profile_figure(prof, title=f"Through-thickness: cell {cell} ({zone}, laminate "
                          f"{_section_meta(st, cell)['laminate']}), case {name}", stress_unit=_stress_unit(st))


def _polar(st: StoreReader, laminate: str | None):
    from postproc.plots import polar_figure
    from shells.engineering import polar_moduli

    sections = st.meta("sections")
    names = [s["laminate"] for s in sections]
    laminate = names[0] if laminate is None else laminate
    if laminate not in names:
        raise FieldError(f"--laminate {laminate!r} is not in the store; use one of: {', '.join(dict.fromkeys(names))}",
                         st.path)
    sec = rebuild_section(st, sections[names.index(laminate)])
    angles = np.linspace(0.0, 360.0, 361)
    e = polar_moduli(sec.props, angles)
    return polar_figure(angles, e["membrane"], e["flexural"], title=f"Laminate {laminate}", unit=_stress_unit(st))


def _envelope(st: StoreReader, material: str | None, criteria: str | None, cell: int | None):
    from postproc.plots import ENVELOPE_PLANES, envelope_figure, trace_envelope
    from shells.criteria import by_name

    from .store import materials_from_meta

    mats = materials_from_meta(st.meta("materials"))
    material = next(iter(mats)) if material is None else material
    if material not in mats:
        raise FieldError(f"--material {material!r} is not in the store; use one of: {', '.join(mats)}", st.path)
    names = list(st.meta("criteria_used")) if not criteria else [c.strip() for c in criteria.split(",")]
    p = mats[material].params()
    curves = {n: [trace_envelope(by_name(n).ratio, p, plane) for plane, _, _ in ENVELOPE_PLANES] for n in names}
    states, label = None, ""
    if cell is not None:
        prof, cell, case = profile_of(st, cell, None)
        plies = [i for i, q in enumerate(_section_meta(st, cell)["plies"]) if q["material"] == material]
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
