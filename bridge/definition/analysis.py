"""The ``[analysis]`` table: criteria, factors of safety and method settings."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from shells.defaults import HOT_SPOTS, SHEAR_FACTOR, TRANSVERSE_SHEAR, WRINKLING_COEFFICIENT
from shells.errors import DefinitionError
from shells.section import SHEAR_METHODS

from bridge.definition.ranges import WRINKLING_COEFFICIENT as WRINKLING_RANGE, check_value
from bridge.definition.schema import expect_table, take
from bridge.definition.units import UnitSystem

#: Largest factor of safety accepted (common practice: 1.0 to about 3; a larger value is a typing error that
#: would turn every margin into -1).
MAX_FOS = 10.0
SPEC = {"criteria": "any", "factor_of_safety": "any", "transverse_shear": "str", "shear_factor": "dimensionless",
        "wrinkling_coefficient": "dimensionless", "hot_spots": "int", "check_ranges": "bool"}
#: Factor of safety by case kind: 1.5 on limit loads (14 CFR 25.303), 1.0 on ultimate loads.
DEFAULT_FOS = {"limit": 1.5, "ultimate": 1.0}


@dataclass(frozen=True)
class Analysis:
    """Settings of the recovery and margin calculation.

    Attributes
    ----------
    criteria : tuple of str
        Registered criterion names (``shells.criteria``), evaluated at every ply point.
    factor_of_safety : dict
        Case kind → factor of safety.
    transverse_shear : str
        ``"equilibrium"`` (Rolfes & Rohwer 1997, default) or ``"factor"`` for H; ``"field"``: H as
        ``"equilibrium"``, and τ13, τ23 recovered from the gradients of the resultant field over the mesh
        (:mod:`bridge.recover.field_shear`).
    shear_factor : float
        Correction factor of the ``"factor"`` method (5/6, common practice).
    wrinkling_coefficient : float
        k in σ_wr = k (Ef Ec Gc)^(1/3) (0.5, design value after Hoff & Mautner).
    hot_spots : int
        Rows in the hot-spot table.
    check_ranges : bool
        Refuse material values outside plausible ranges (``bridge.definition.ranges``); false accepts exotic
        data and the run metadata says ranges were not checked.
    """

    criteria: tuple[str, ...] = ("max-stress", "max-strain", "tsai-wu", "hashin")
    factor_of_safety: tuple[tuple[str, float], ...] = tuple(DEFAULT_FOS.items())
    transverse_shear: str = TRANSVERSE_SHEAR
    shear_factor: float = SHEAR_FACTOR
    wrinkling_coefficient: float = WRINKLING_COEFFICIENT
    hot_spots: int = HOT_SPOTS
    check_ranges: bool = True

    def fos(self, kind: str) -> float:
        return dict(self.factor_of_safety)[kind]


def parse_analysis(table: Any, units: UnitSystem) -> Analysis:
    from shells.criteria import DEFAULT, by_name

    values = take(expect_table(table, "[analysis]"), SPEC, "analysis", units)
    criteria = values.get("criteria", DEFAULT)
    if not isinstance(criteria, (list, tuple)) or not criteria or not all(isinstance(c, str) for c in criteria):
        raise DefinitionError("analysis.criteria must be a non-empty list of criterion names")
    try:
        for name in criteria:
            by_name(name)
    except DefinitionError as err:
        raise DefinitionError(f"analysis.criteria: {err.detail}") from None
    fos = dict(DEFAULT_FOS)
    given = expect_table(values.get("factor_of_safety", {}), "analysis.factor_of_safety")
    for kind, value in given.items():
        if kind not in DEFAULT_FOS:
            raise DefinitionError(f"analysis.factor_of_safety: unknown case kind '{kind}'; use limit or ultimate")
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 1.0 <= value <= MAX_FOS:
            raise DefinitionError(f"analysis.factor_of_safety.{kind} = {value!r} must be a number from 1 to "
                                  f"{MAX_FOS:g}")
        fos[kind] = float(value)
    method = values.get("transverse_shear", TRANSVERSE_SHEAR)
    if method not in SHEAR_METHODS:
        raise DefinitionError(f"analysis.transverse_shear = {method!r}; use one of {', '.join(SHEAR_METHODS)}")
    k = values.get("shear_factor", SHEAR_FACTOR)
    if not 0 < k <= 1.0:
        raise DefinitionError(f"analysis.shear_factor = {k} must lie in (0, 1]")
    wrinkling = values.get("wrinkling_coefficient", WRINKLING_COEFFICIENT)
    if not wrinkling > 0:
        raise DefinitionError(f"analysis.wrinkling_coefficient = {wrinkling:g} must be positive")
    if values.get("check_ranges", True):
        check_value(wrinkling, "wrinkling_coefficient", WRINKLING_RANGE, units, "analysis.wrinkling_coefficient")
    hot = values.get("hot_spots", HOT_SPOTS)
    if not 1 <= hot <= 100000:
        raise DefinitionError(f"analysis.hot_spots = {hot} must lie between 1 and 100000")
    return Analysis(tuple(dict.fromkeys(criteria)), tuple(fos.items()), method, k, wrinkling, hot,
                    values.get("check_ranges", True))
