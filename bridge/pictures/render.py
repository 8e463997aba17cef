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

from bridge.atomic import atomic_path
from bridge.results.store import StoreReader

SCALAR_FIELDS = ("margin", "strength-ratio", "critical-ply", "criterion", "mode", "case")
#: Component name → (dataset under /plies, component index, symbol; ASCII: VTK's fonts lack Greek).
COMPONENTS = {"stress:s1": ("stress", 0, "sigma1"), "stress:s2": ("stress", 1, "sigma2"), "stress:s12": ("stress", 2, "tau12"),
              "stress:s13": ("transverse_shear", 0, "tau13"), "stress:s23": ("transverse_shear", 1, "tau23"),
              "strain:e1": ("strain", 0, "eps1"), "strain:e2": ("strain", 1, "eps2"), "strain:e12": ("strain", 2, "gamma12")}
FIELDS = SCALAR_FIELDS + tuple(COMPONENTS)


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
    table = {c.name: c.modes for c in st.run.criteria}
    codes = {name: i for i, name in enumerate(table)}
    labels, index = [], {}
    for name in st.run.criteria_used:
        for m, mode in enumerate(table[name]):
            index[(codes[name], m)] = len(labels)
            labels.append(f"{name}: {mode}")
    return labels, index


def _categories(st: StoreReader, field: str, codes: np.ndarray, modes: np.ndarray | None) -> tuple[np.ndarray, list]:
    if field == "critical-ply":
        n = st.h5["envelope/margin"].shape[1]
        return np.where(codes > 0, codes - 1, -1), [f"ply {k}" for k in range(1, n + 1)]
    if field == "criterion":
        return codes, [c.name for c in st.run.criteria]
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
        unit = "-" if field.startswith("strain") else st.run.label("stress")
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
    title = f"{st.run.title or Path(st.path).stem}\n{f.title}"
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
        from bridge.mesh.formats import write_mesh
        from bridge.mesh.shell import shell_mesh_from_blocks

        write_mesh(cell_data, shell_mesh_from_blocks(points, blocks), {f.name.replace(":", "_"): f.values})
    value = None
    if f.mark is not None:
        v = f.values[f.mark]
        value = f.labels[int(v)] if f.kind == "categorical" else float(v)
    return {"field": f.name, "kind": f.kind, "cell": f.mark, "value": value,
            "legend": [list(e) for e in pic.legend], "output": str(output)}
