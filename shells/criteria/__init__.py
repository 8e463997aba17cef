"""Failure criteria: one module per criterion, registered in the one explicit list.

Each criterion is a small declarative :class:`~shells.criteria.base.Criterion`
subclass with a numba ``ratio(sm, sf, p) -> (strength ratio, mode)``; see
``docs/criteria.md`` for the statements, modes, required keys and sources.
The registry is :data:`shells.criteria.registry.CRITERIA`; the point state and
the ratio conventions are in :mod:`shells.criteria.state`; the cached block
driver by registry code is :mod:`shells.criteria.dispatch`.
"""

# ruff: noqa: E402
from __future__ import annotations

from ..numba_cache import configure

configure()  # again before any cached kernel is defined (see shells.numba_cache)

from .base import Criterion
from .core_crushing import CoreCrushing
from .core_shear import CoreShear
from .dimpling import Dimpling
from .dispatch import evaluate, evaluate_block, ratio_by_code
from .hashin import Hashin
from .hoffman import Hoffman
from .interlaminar import Interlaminar
from .larc03 import LaRC03
from .max_strain import MaxStrain
from .max_stress import MaxStress
from .puck import Puck
from .registry import CRITERIA, DEFAULT, NAMES, by_name, check_requirements, code
from .state import failure_index
from .tsai_hill import TsaiHill
from .tsai_wu import TsaiWu
from .von_mises import VonMises
from .wrinkling import Wrinkling

__all__ = ["CRITERIA", "DEFAULT", "NAMES", "Criterion", "by_name", "code", "check_requirements",
           "evaluate", "evaluate_block", "ratio_by_code", "failure_index",
           "CoreCrushing", "CoreShear", "Dimpling", "Hashin", "Hoffman", "Interlaminar", "LaRC03", "MaxStrain",
           "MaxStress", "Puck", "TsaiHill", "TsaiWu", "VonMises", "Wrinkling"]
