"""Fields of a results store as one value per cell, ready to draw (docs/pictures.md).

``--ply envelope`` is the per-cell value at the critical ply (the minimum over plies); ``--case envelope`` the
governing case. A ply stress or strain component needs ``/plies``: at the envelope it is the governing state
(critical ply, case and point), otherwise the extreme over the ply's three points (sign kept). Components are
named as in :mod:`shells.components` (material axes ``sigma1`` …, element axes ``sigma_x`` …).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from postproc.numbers import degrees, sig
from shells.components import ALL, STRAINS, SYMBOLS, check_component
from shells.errors import InputError

from bridge.pictures.fields_beyond import BEYOND_FIELDS, beyond_field
from bridge.results.components import component_states
from bridge.results.store import StoreReader

SCALAR_FIELDS = ("margin", "strength-ratio", "critical-ply", "criterion", "mode", "case") + BEYOND_FIELDS
FIELDS = SCALAR_FIELDS + ALL
TITLES = {"critical-ply": "Critical ply (the ply with the lowest margin)", "criterion": "Governing criterion",
          "mode": "Governing criterion and failure mode", "case": "Governing case"}
#: Margins above this take the end colour of the map, so the low margins keep the colour range.
MARGIN_CAP = 2.0


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
    groups: tuple | None = None
    unit: str = "-"


class FieldError(InputError):
    """A --field / --ply / --case combination the store cannot answer."""


def ply_index(st: StoreReader, ply: str | int) -> int | None:
    """0-based ply of ``--ply`` (None for ``envelope``)."""
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


def case_index(st: StoreReader, case: str) -> int | None:
    """Index of ``--case`` (None for ``envelope``)."""
    if case == "envelope":
        return None
    names = st.case_names
    if case not in names:
        raise FieldError(f"--case {case!r} is not in the store; use 'envelope' or one of: {', '.join(names)}",
                         st.path)
    return names.index(case)


def ply_categories(st: StoreReader, critical: np.ndarray) -> tuple[np.ndarray, list[str], list[str]]:
    """(category per cell, labels ``ply 5: −45° glass-ud``, group per label ``laminate (zones)``)."""
    section = st.array("model/section")
    ok = critical > 0
    pairs = sorted({(int(s), int(k)) for s, k in zip(section[ok], critical[ok])})
    index = {pair: i for i, pair in enumerate(pairs)}
    zones_of = {}
    for z in st.run.zones:
        zones_of.setdefault(z.section, []).append(z.name)
    kinds = {m.name: m.kind for m in st.run.materials}
    labels, groups = [], []
    for s, k in pairs:
        sec = st.run.sections[s]
        p = sec.plies[k - 1]
        labels.append(f"ply {k}: core {p.material} ({degrees(p.angle)})" if kinds.get(p.material) == "core"
                      else f"ply {k}: {degrees(p.angle)} {p.material}")
        groups.append(f"{sec.laminate} ({', '.join(zones_of.get(s, []))})")
    codes = np.array([index.get((int(s), int(k)), -1) for s, k in zip(section, critical)], dtype=float)
    return codes, labels, groups


def mode_categories(st: StoreReader, crit: np.ndarray, mode: np.ndarray):
    """(category per cell, mode labels, criterion per label) of the modes that occur."""
    table = st.run.criteria
    code = {c.name: i for i, c in enumerate(table)}
    used = {code[name] for name in st.run.criteria_used}
    pairs = sorted({(int(c), int(m)) for c, m in zip(crit, mode) if c in used and m >= 0})
    index = {pair: i for i, pair in enumerate(pairs)}
    codes = np.array([index.get((int(c), int(m)), -1) for c, m in zip(crit, mode)], dtype=float)
    return codes, [table[c].modes[m] for c, m in pairs], [table[c].name for c, _ in pairs]


def component(st: StoreReader, name: str, ply: int | None, case: int | None) -> np.ndarray:
    """Per-cell value of a ply component (see the module notes)."""
    if not st.has("plies"):
        raise FieldError(f"--field {name} needs ply stresses and strains (/plies); run plybridge recover with "
                         "--store plies", st.path)
    n = st.h5["cells/min_margin"].shape[0]
    crit = st.array("cells/critical_ply")
    plies = np.where(crit > 0, crit - 1, -1) if ply is None else np.full(n, ply)
    if case is None:
        cases = st.array("cells/case") if ply is None else st.array("envelope/case")[:, ply]
        points = st.array("cells/point") if ply is None else st.array("envelope/point")[:, ply]
        through = component_states(st, name, plies, cases)
        ok = (cases >= 0) & (points >= 0)
        return np.where(ok, through[np.arange(n), np.maximum(points, 0)], np.nan)
    through = component_states(st, name, plies, np.full(n, case))
    pick = np.argmax(np.where(np.isnan(through), -1.0, np.abs(through)), axis=1)
    return through[np.arange(n), pick]


def select_field(st: StoreReader, field: str = "margin", ply: str | int = "envelope",
                 case: str = "envelope") -> Field:
    """Values per cell of ``field`` at ``ply`` (number or ``envelope``) and ``case`` (name or ``envelope``)."""
    if field not in SCALAR_FIELDS:
        check_component(field, "--field", FIELDS)
    if field in BEYOND_FIELDS:
        return beyond_field(st, field, ply, case)
    k, c = ply_index(st, ply), case_index(st, case)
    where = ("critical ply" if k is None else f"ply {k + 1} of each laminate") + ", " + (
        "envelope of cases" if c is None else f"case {case}")
    margin = st.array("cells/min_margin")
    if field in ALL:
        values = component(st, field, k, c)
        unit = "-" if field in STRAINS else st.run.label("stress")
        symbol = SYMBOLS[field]
        finite = np.isfinite(values)
        worst = int(np.argmax(np.where(finite, np.abs(values), -1.0))) if finite.any() else None
        suffix = "" if unit == "-" else f" {unit}"
        label = None if worst is None else f"{symbol} {sig(values[worst])}{suffix} (cell {worst})"
        return Field(field, values, "diverging", None, f"{symbol} ({field}): {where}", f"{symbol} [{unit}]",
                     worst, label, unit=unit)
    if field in ("margin", "strength-ratio"):
        return _margin_field(st, field, k, c, where)
    if c is not None:
        raise FieldError(f"--field {field} is stored for the envelope of cases only; use --case envelope", st.path)
    if field == "critical-ply" and k is not None:
        raise FieldError("--field critical-ply is a per-cell field; use --ply envelope", st.path)
    src = "cells" if k is None else "envelope"
    pick = (lambda a: a) if k is None else (lambda a: a[:, k])
    groups = None
    if field == "critical-ply":
        values, labels, groups = ply_categories(st, st.array("cells/critical_ply"))
    elif field == "mode":
        values, labels, groups = mode_categories(st, pick(st.array(f"{src}/criterion")), pick(st.array(f"{src}/mode")))
    else:
        codes = pick(st.array(f"{src}/{'criterion' if field == 'criterion' else 'case'}")).astype(float)
        labels = [c.name for c in st.run.criteria] if field == "criterion" else list(st.case_names)
        values = np.where(codes >= 0, codes, np.nan)
    finite = np.isfinite(margin)
    worst = int(np.argmin(np.where(finite, margin, np.inf))) if finite.any() else None
    label = None
    if worst is not None and 0 <= values[worst] < len(labels):
        i = int(values[worst])
        name = labels[i] + (f", {groups[i]}" if groups else "")
        label = f"{name} (MS {sig(margin[worst])}, cell {worst})"
    title = f"{TITLES[field]}: {where}"
    return Field(field, values.astype(float), "categorical", tuple(labels), title, field, worst, label,
                 groups=tuple(groups) if groups else None)


def _margin_field(st: StoreReader, field: str, k: int | None, c: int | None, where: str) -> Field:
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
        values = st.array("cells/min_margin" if name == "margin" else "cells/strength_ratio")
    values = np.where(st.array("cells/flagged") & ~np.isfinite(values), np.nan, values)
    finite = np.isfinite(values)
    worst = int(np.argmin(np.where(finite, values, np.inf))) if finite.any() else None
    symbol = "MS" if field == "margin" else "R"
    label = None if worst is None else f"{symbol} {sig(values[worst])} (cell {worst})"
    what = "Margin of safety" if field == "margin" else "Strength ratio"
    kind = "diverging" if field == "margin" else "sequential"
    top = np.nanmax(np.where(finite, values, -np.inf), initial=0)
    cap = MARGIN_CAP if field == "margin" and top > MARGIN_CAP else None
    return Field(field, values, kind, None, f"{what}: {where}, all criteria", f"{symbol} [-]", worst, label, cap)
