"""The one explicit list of failure criteria, lookup by name and the requirement check.

A criterion's index in :data:`CRITERIA` is its ``code`` stored in results
files: append only. To add a criterion: write its module, add its class here
and a branch in :mod:`shells.criteria.dispatch`.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable, Mapping

import numpy as np

from ..errors import DefinitionError, MaterialError
from .base import Criterion
from .core_crushing import CoreCrushing
from .core_shear import CoreShear
from .dimpling import Dimpling
from .hashin import Hashin
from .hoffman import Hoffman
from .interlaminar import Interlaminar
from .larc03 import LaRC03
from .max_strain import MaxStrain
from .max_stress import MaxStress
from .puck import Puck
from .tsai_hill import TsaiHill
from .tsai_wu import TsaiWu
from .von_mises import VonMises
from .wrinkling import Wrinkling

#: The registry; a criterion's index here is its ``code`` stored in results files. Append only.
CRITERIA = (MaxStress, MaxStrain, TsaiHill, TsaiWu, Hoffman, Hashin, Puck, LaRC03, VonMises,
            CoreShear, CoreCrushing, Wrinkling, Dimpling, Interlaminar)

#: Criteria evaluated when a definition names none.
DEFAULT = ("max-stress", "max-strain", "tsai-wu", "hashin")

NAMES = tuple(c.name for c in CRITERIA)

# Property-vector names whose definition-file key differs (for the fix in error messages).
_DEFINITION_KEY = {"core_S13": "S13", "core_S23": "S23", "alpha0": "alpha0",
                   "YT_is": "Yt", "S12_is": "S12",
                   **{f"strain_{name}": f"{strength} (or strain_limits.{name})"
                      for name, strength in (("fibre_tension", "Xt"), ("fibre_compression", "Xc"),
                                             ("matrix_tension", "Yt"), ("matrix_compression", "Yc"),
                                             ("shear", "S12"))}}


def by_name(name: str) -> type[Criterion]:
    """The criterion class registered as ``name``.

    Raises
    ------
    DefinitionError
        Unknown name; the message lists the known criteria and suggests the
        closest one.
    """
    for crit in CRITERIA:
        if crit.name == name:
            return crit
    close = difflib.get_close_matches(str(name).lower().replace("_", "-"), NAMES, n=1, cutoff=0.5)
    hint = f"did you mean '{close[0]}'? " if close else ""
    raise DefinitionError(f"unknown failure criterion '{name}'; {hint}use one of: {', '.join(NAMES)}")


def code(name: str) -> int:
    """Index of criterion ``name`` in :data:`CRITERIA` (the code stored in results files)."""
    return CRITERIA.index(by_name(name))


def _fix_key(entry: str) -> str:
    return " or ".join(_DEFINITION_KEY.get(key, key) for key in entry.split("|"))


def check_requirements(criteria: Iterable[str | type[Criterion]], materials: Mapping[str, np.ndarray]) -> None:
    """Refuse a material that lacks a property a selected criterion needs.

    Parameters
    ----------
    criteria : iterable of str or Criterion subclass
        Selected criteria (names are resolved with :func:`by_name`).
    materials : mapping str -> float64 (NPARAM,)
        Material name -> property vector (:mod:`shells.params`). A criterion
        is checked only against the kinds it applies to.

    Raises
    ------
    MaterialError
        For the first missing property, naming the material, the property,
        the criterion and the fix.
    DefinitionError
        For an unknown criterion name.
    """
    classes = [by_name(c) if isinstance(c, str) else c for c in criteria]
    for mat, p in materials.items():
        p = np.asarray(p, dtype=np.float64)
        for crit in classes:
            entry = crit.missing(p)
            if entry is not None:
                key = _fix_key(entry)
                raise MaterialError(f"material '{mat}' lacks {key} needed by criterion '{crit.name}'; "
                                    f"add {key} to [materials.{mat}]")
