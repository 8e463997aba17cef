"""The ``[analysis]`` table: criteria, factors of safety by case kind, method settings, the progressive failure
analysis, the misalignment tolerance and the restricted envelopes."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from shells.defaults import HOT_SPOTS, SHEAR_FACTOR, TRANSVERSE_SHEAR, WRINKLING_COEFFICIENT
from shells.errors import DefinitionError
from shells.section import SHEAR_METHODS

from bridge.definition.envelopes import Progressive, Restricted, parse_progressive, parse_restricted
from bridge.definition.ranges import WRINKLING_COEFFICIENT as WRINKLING_RANGE, check_value
from bridge.definition.schema import check_name, expect_table, take
from bridge.definition.units import UnitSystem

#: Largest factor of safety accepted (common practice: 1.0 to about 3; a larger value is a typing error that
#: would turn every margin into -1).
MAX_FOS = 10.0
SPEC = {"criteria": "any", "factor_of_safety": "any", "transverse_shear": "str", "shear_factor": "dimensionless",
        "wrinkling_coefficient": "dimensionless", "hot_spots": "int", "check_ranges": "bool",
        "progressive": "any", "misalignment": "angle", "envelopes": "any"}
#: Factor of safety by case kind: 1.5 on limit loads (14 CFR 25.303), 1.0 on ultimate loads. A definition may
#: declare kinds of its own (proof, burst, ...) with their factors.
DEFAULT_FOS = {"limit": 1.5, "ultimate": 1.0}
#: Largest misalignment tolerance accepted (degrees): a tolerance on fibre placement is a few degrees; more is a
#: different layup, to be analysed as such.
MAX_MISALIGNMENT = 15.0


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
    progressive : Progressive or None
        ``[analysis.progressive]``: the ply-discount analysis to the last ply (None: not run).
    misalignment : float
        Tolerance δ on the laminate orientation (degrees): every cell is also checked with its laminate turned
        by −δ and +δ and the worst is kept (0: off).
    envelopes : tuple of Restricted
        ``[analysis.envelopes.NAME]``: envelopes restricted to chosen criteria, modes and cases, kept beside the
        full one.
    """

    criteria: tuple[str, ...] = ("max-stress", "max-strain", "tsai-wu", "hashin")
    factor_of_safety: tuple[tuple[str, float], ...] = tuple(DEFAULT_FOS.items())
    transverse_shear: str = TRANSVERSE_SHEAR
    shear_factor: float = SHEAR_FACTOR
    wrinkling_coefficient: float = WRINKLING_COEFFICIENT
    hot_spots: int = HOT_SPOTS
    check_ranges: bool = True
    progressive: Progressive | None = None
    misalignment: float = 0.0
    envelopes: tuple[Restricted, ...] = ()

    def fos(self, kind: str) -> float:
        return dict(self.factor_of_safety)[kind]

    @property
    def kinds(self) -> tuple[str, ...]:
        """The case kinds: limit, ultimate and those declared in ``factor_of_safety``."""
        return tuple(k for k, _ in self.factor_of_safety)


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
        check_name(kind, "analysis.factor_of_safety (case kinds)")
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
    criteria = tuple(dict.fromkeys(criteria))
    delta = float(values.get("misalignment", 0.0))
    if not 0.0 <= delta <= MAX_MISALIGNMENT:
        raise DefinitionError(f"analysis.misalignment = {delta:g}° must lie from 0 to {MAX_MISALIGNMENT:g}° (a "
                              "tolerance on the laminate orientation, e.g. \"3 deg\")")
    progressive = None if "progressive" not in values else parse_progressive(values["progressive"], criteria)
    envelopes = parse_restricted(values.get("envelopes", {}), criteria, tuple(fos))
    return Analysis(criteria, tuple(fos.items()), method, k,
                    wrinkling, hot,
                    values.get("check_ranges", True), progressive, delta, envelopes)
