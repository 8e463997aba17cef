"""Failure modes that a criterion evaluates on allowables of their own, and property vectors that keep only
chosen modes.

A restricted envelope (e.g. fibre failure only, for a burst case) needs the strength ratio of the chosen modes
alone. Where every mode of a criterion reads allowables no other mode reads (the maximum stress and maximum
strain checks: each component against its own limit), setting the allowables of the other modes to infinity
leaves exactly the chosen modes: the criterion's R is then the smallest R over them. Interactive criteria
(Tsai-Wu, Hoffman, Tsai-Hill: one polynomial) and criteria whose modes share an allowable (Hashin's S12 enters
the fibre-tension and both matrix modes) cannot be split this way and are refused for a mode restriction.
"""

from __future__ import annotations

from typing import Iterable

import numpy as np

from . import params as P

_STRESS_PLY = {"fibre tension": ("Xt",), "fibre compression": ("Xc",), "matrix tension": ("Yt", "YT_is"),
               "matrix compression": ("Yc",), "in-plane shear": ("S12", "S12_is")}
_STRAIN_PLY = {"fibre tension": ("strain_fibre_tension",), "fibre compression": ("strain_fibre_compression",),
               "matrix tension": ("strain_matrix_tension",), "matrix compression": ("strain_matrix_compression",),
               "in-plane shear": ("strain_shear",)}

#: Criterion → material kind → mode → the allowables (:mod:`shells.params` names) that mode alone reads.
MODE_ALLOWABLES: dict[str, dict[int, dict[str, tuple[str, ...]]]] = {
    "max-stress": {P.KIND_PLY: _STRESS_PLY,
                   P.KIND_ISOTROPIC: {"tension": ("Xt", "Yt"), "compression": ("Xc", "Yc"), "shear": ("S12",)},
                   P.KIND_CORE: {"in-plane tension": ("Xt", "Yt"), "in-plane compression": ("Xc", "Yc"),
                                 "in-plane shear": ("S12",)}},
    "max-strain": {P.KIND_PLY: _STRAIN_PLY},
}

#: Words that stand for a family of modes in a restriction.
FAMILIES = ("fibre", "matrix")


def family(mode: str) -> str:
    """``fibre`` for a fibre mode (its name starts with "fibre"), ``matrix`` for another mode of a ply criterion
    (matrix, in-plane shear, inter-fibre), ``other`` for modes of isotropic layers, cores and faces."""
    if mode.startswith("fibre"):
        return "fibre"
    if mode.startswith(("matrix", "in-plane shear", "inter-fibre")):
        return "matrix"
    return "other"


def chosen_modes(modes: Iterable[str], words: Iterable[str]) -> tuple[str, ...]:
    """The modes of a criterion named by ``words`` (mode names, or the families of :data:`FAMILIES`)."""
    words = set(words)
    return tuple(m for m in modes if m in words or family(m) in words)


def separable(criterion: str) -> bool:
    """Whether ``criterion`` evaluates each of its modes on allowables of their own."""
    return criterion in MODE_ALLOWABLES


def keep_modes(params: np.ndarray, criterion: str, modes: Iterable[str]) -> np.ndarray:
    """Property vectors (a copy) on which ``criterion`` can fail only in ``modes``.

    The allowables of every other mode of the row's material kind are set to +inf (that limit is never
    reached); kinds the criterion does not split keep their vectors.

    Parameters
    ----------
    params : float64 (nrows, NPARAM)
    criterion : str
        A criterion of :data:`MODE_ALLOWABLES`.
    modes : iterable of str
        Mode names of that criterion to keep.
    """
    keep = set(modes)
    out = np.array(params, dtype=np.float64)
    for kind, table in MODE_ALLOWABLES[criterion].items():
        rows = out[:, P.KIND] == kind
        drop = [P.INDEX[name] for mode, names in table.items() if mode not in keep for name in names]
        if drop and rows.any():
            out[np.ix_(rows, drop)] = np.inf
    return out
