"""Map fields of the analyses beyond the first-ply envelope (docs/pictures.md): the first- and last-ply load
factors of the progressive analysis and the laminate turn that governs under a misalignment tolerance.

Load factors multiply the case's mechanical resultants (the held part fixed, docs/criteria.md); ``--case
envelope`` takes each cell's lowest factor over the cases. A cell where no ply fails (factor ∞) and factors
above :data:`FACTOR_CAP` take the top colour of the scale, labelled "≥ cap".
"""

from __future__ import annotations

import numpy as np

from postproc.numbers import degrees, sig

from bridge.results.store import StoreReader

BEYOND_FIELDS = ("first-ply-factor", "last-ply-factor", "misalignment")
#: Load factors above this take the end colour (∞: no failure), so the low factors keep the colour range.
FACTOR_CAP = 5.0
_PATHS = {"first-ply-factor": "cells/first_ply_factor", "last-ply-factor": "cells/last_ply_factor",
          "misalignment": "cells/misalignment"}
_WHAT = {"first-ply-factor": ("First-ply load factor", "λ first"),
         "last-ply-factor": ("Last-ply load factor", "λ last")}


def beyond_field(st: StoreReader, name: str, ply: str | int, case: str):
    """The :class:`bridge.pictures.fields.Field` of ``name`` (one of :data:`BEYOND_FIELDS`)."""
    from bridge.pictures.fields import Field, FieldError, case_index

    if str(ply) != "envelope":
        raise FieldError(f"--field {name} is a per-cell field (the whole laminate); use --ply envelope", st.path)
    path = _PATHS[name]
    if not st.has(path):
        why = ("a progressive analysis ([analysis.progressive])" if name != "misalignment"
               else "a misalignment tolerance ([analysis] misalignment)")
        raise FieldError(f"--field {name}: the store has no {path}; run plybridge recover with {why}", st.path)
    c = case_index(st, case)
    if name == "misalignment":
        if c is not None:
            raise FieldError("--field misalignment is stored for the envelope of cases only; use --case envelope",
                             st.path)
        return _turn_field(st, Field)
    raw = st.array(path)
    where = "lowest over the cases" if c is None else f"case {case}"
    with np.errstate(invalid="ignore"):
        values = raw[:, c] if c is not None else np.where(np.isnan(raw).all(axis=1), np.nan,
                                                           np.nanmin(np.where(np.isnan(raw), np.inf, raw), axis=1))
    finite = np.isfinite(values)
    worst = int(np.argmin(np.where(finite, values, np.inf))) if finite.any() else None
    over = np.nan_to_num(values, nan=-np.inf) > FACTOR_CAP
    cap = FACTOR_CAP if over.any() else None
    shown = np.where(over, FACTOR_CAP, values)
    what, symbol = _WHAT[name]
    label = None if worst is None else f"{symbol} {sig(values[worst])} (cell {worst})"
    never = int(np.sum(np.isposinf(values)))
    title = (f"{what} on the mechanical load: {where}" + (f"; {never} cells never fail (∞, top colour)"
                                                          if never else ""))
    return Field(name, shown, "sequential", None, title, f"{symbol} [-]", worst, label, cap)


def _turn_field(st: StoreReader, Field):
    """The governing turn of each cell (−δ, nominal, +δ) as categories."""
    turn = st.array("cells/misalignment")
    delta = float(st.run.analysis.misalignment)
    labels = (f"turned {degrees(-delta)}", "nominal", f"turned {degrees(delta)}")
    codes = np.full(turn.shape, np.nan)
    codes[turn < 0] = 0
    codes[turn == 0] = 1
    codes[turn > 0] = 2
    margin = st.array("cells/min_margin")
    finite = np.isfinite(margin)
    worst = int(np.argmin(np.where(finite, margin, np.inf))) if finite.any() else None
    label = None
    if worst is not None and np.isfinite(codes[worst]):
        label = f"{labels[int(codes[worst])]} (MS {sig(margin[worst])}, cell {worst})"
    return Field("misalignment", codes, "categorical", labels,
                 f"Laminate turn that governs each cell (misalignment tolerance ±{degrees(delta)})", "turn", worst,
                 label)
