"""What every layer material shares: density, thickness, knockdown (per environment), source and description.

The material classes (:mod:`shells.materials`, :mod:`shells.cores`, :mod:`shells.wood`) derive from
:class:`_Layer`; the helpers check and fill property vectors (:mod:`shells.params`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

import numpy as np

from . import params as P
from .errors import MaterialError


def _require_positive(material: str, **values: float | None) -> None:
    for key, value in values.items():
        if value is not None and not (value > 0 and math.isfinite(value)):
            raise MaterialError(
                f"material '{material}': {key} = {value!r} must be a positive finite number; fix the value")


def _fill(vec: np.ndarray, **values: float | None) -> None:
    for key, value in values.items():
        if value is not None:
            vec[P.INDEX[key]] = value


@dataclass(frozen=True)
class _Layer:
    """Fields and behaviour shared by every layer material."""

    name: str
    density: float = 0.0
    thickness: float | None = None
    knockdown: float = 1.0
    #: The factors whose product is ``knockdown``, as (name, factor) pairs (empty when given as one number).
    knockdown_factors: tuple[tuple[str, float], ...] = ()
    #: The environment factor by environment name, as (name, factor) pairs, when given as a table; ``knockdown``
    #: then holds the smallest of them (the factor of a case that names no environment).
    environment_knockdowns: tuple[tuple[str, float], ...] = ()
    #: Where the values come from (a data sheet, a test report), shown in the report; not used in any calculation.
    source: str | None = None
    description: str | None = None

    def alpha(self) -> np.ndarray:
        return np.zeros(3)

    def beta(self) -> np.ndarray:
        return np.zeros(3)

    def _base_params(self, kind: int) -> np.ndarray:
        vec = np.full(P.NPARAM, np.nan)
        vec[P.KIND] = kind
        return vec

    def knockdown_for(self, environment: str | None) -> float:
        """The knockdown of a case checked in ``environment`` (None: the default, ``knockdown``).

        With an environment table, the other factors times the table's factor for ``environment``; with none,
        ``knockdown`` (a number for the environment stands for every environment).

        Raises
        ------
        MaterialError
            The table has no factor for ``environment``.
        """
        if environment is None or not self.environment_knockdowns:
            return self.knockdown
        table = dict(self.environment_knockdowns)
        if environment not in table:
            raise MaterialError(f"material '{self.name}': knockdown.environment has no factor for environment "
                                f"'{environment}' (it lists {', '.join(table)}); add {environment} = ... to it")
        return self.knockdown / min(table.values()) * table[environment]

    def _validate_common(self) -> None:
        if self.density < 0 or not math.isfinite(self.density):
            raise MaterialError(f"material '{self.name}': density = {self.density!r} must be zero or positive")
        _require_positive(self.name, thickness=self.thickness)
        if not (0 < self.knockdown <= 1):
            raise MaterialError(
                f"material '{self.name}': knockdown = {self.knockdown!r} must lie in (0, 1]; it is the "
                "fraction of strength retained (product of environment and damage factors)")
        for env, factor in self.environment_knockdowns:
            if not (0 < factor <= 1):
                raise MaterialError(f"material '{self.name}': knockdown.environment.{env} = {factor!r} must lie in "
                                    "(0, 1]; it is the fraction of strength retained in that environment")

    def strength_keys(self) -> tuple[str, ...]:
        """Names of the strength entries this material defines (for error messages)."""
        return tuple(f.name for f in fields(self) if f.name in P.INDEX and f.name not in _ELASTIC
                     and getattr(self, f.name) is not None)


_ELASTIC = {"E1", "E2", "G12", "nu12", "G13", "G23", "Ez"}
