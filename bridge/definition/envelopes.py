"""``[analysis.progressive]`` (ply discount to the last ply) and ``[analysis.envelopes.NAME]`` (envelopes
restricted to chosen criteria, modes and cases)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from postproc.run_meta import EnvelopeInfo
from shells.errors import DefinitionError
from shells.progressive import DEFAULT_FIBRE_RETAINED, DEFAULT_MATRIX_RETAINED, in_plane
from shells.separable import FAMILIES, chosen_modes, separable

from bridge.definition.schema import check_keys, check_name, expect_table, suggest

PROGRESSIVE_KEYS = ("matrix_retained", "fibre_retained", "criteria")


@dataclass(frozen=True)
class Progressive:
    """The ply-discount analysis (docs/criteria.md, progressive failure).

    Parameters
    ----------
    matrix_retained : float
        Fraction of E2 and G12 a ply keeps after a matrix failure (0: discounted entirely).
    fibre_retained : float
        Fraction of every modulus a ply keeps after a fibre failure (0: discounted entirely).
    criteria : tuple of str
        The in-plane criteria that find each failure (default: the run's criteria that check the in-plane
        stresses of plies and isotropic layers).
    """

    matrix_retained: float = DEFAULT_MATRIX_RETAINED
    fibre_retained: float = DEFAULT_FIBRE_RETAINED
    criteria: tuple[str, ...] = ()


#: Keys of an ``[analysis.envelopes.NAME]`` table.
ENVELOPE_KEYS = ("criteria", "modes", "kinds", "cases", "description")


@dataclass(frozen=True)
class Restricted(EnvelopeInfo):
    """An envelope restricted to chosen criteria, modes and cases, kept beside the full one: the fields of
    :class:`postproc.run_meta.EnvelopeInfo` (as stored in the run metadata), with what the run asks of them.

    ``criteria`` is a subset of the run's; ``modes`` mode names or families (``fibre``, ``matrix``), empty:
    every mode; ``kinds``, ``cases`` the case kinds and names kept (both empty: every case; otherwise a case is
    kept when its kind or its name is listed).
    """

    def modes_of(self, criterion) -> tuple[str, ...]:
        """The modes of ``criterion`` (a criterion class) this envelope keeps."""
        return tuple(criterion.modes) if not self.modes else chosen_modes(criterion.modes, self.modes)

    def keeps(self, case) -> bool:
        """Whether the envelope covers ``case`` (a :class:`bridge.definition.cases.Case`)."""
        return (not self.kinds and not self.cases) or case.kind in self.kinds or case.name in self.cases


def _fraction(value: Any, where: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0.0 <= value < 1.0:
        raise DefinitionError(f"{where} = {value!r} must be a number from 0 to below 1 (the fraction of the failed "
                              "ply's moduli kept)")
    return float(value)


def _names(value: Any, where: str) -> tuple[str, ...]:
    if not isinstance(value, list) or not value or not all(isinstance(v, str) for v in value):
        raise DefinitionError(f"{where} must be a non-empty list of names")
    return tuple(dict.fromkeys(value))


def _criteria(value: Any, where: str, run: tuple[str, ...]) -> tuple[str, ...]:
    names = _names(value, where)
    for name in names:
        if name not in run:
            raise DefinitionError(f"{where}: '{name}' is not one of the run's criteria{suggest(name, run)}; add it "
                                  f"to analysis.criteria or choose from {', '.join(run)}")
    return names


def parse_progressive(table: Any, run: tuple[str, ...]) -> Progressive:
    """``[analysis.progressive]``; ``run`` the run's criteria."""
    where = "analysis.progressive"
    table = expect_table(table, f"[{where}]")
    check_keys(table, PROGRESSIVE_KEYS, where)
    chosen = _criteria(table["criteria"], f"{where}.criteria", run) if "criteria" in table else run
    kept = tuple(c for c in chosen if in_plane(c))
    if "criteria" in table and kept != chosen:
        out = [c for c in chosen if c not in kept]
        raise DefinitionError(f"{where}.criteria: {', '.join(out)} check transverse shear, σ3 or sandwich faces, "
                              "not the in-plane ply stresses the ply discount follows; leave them out")
    if not kept:
        raise DefinitionError(f"[{where}]: none of the run's criteria checks the in-plane stresses of plies; add "
                              "one (e.g. \"tsai-wu\" or \"hashin\") to analysis.criteria or give criteria = [...]")
    return Progressive(_fraction(table.get("matrix_retained", DEFAULT_MATRIX_RETAINED), f"{where}.matrix_retained"),
                       _fraction(table.get("fibre_retained", DEFAULT_FIBRE_RETAINED), f"{where}.fibre_retained"),
                       kept)


def parse_restricted(tables: Any, run: tuple[str, ...], kinds: tuple[str, ...]) -> tuple[Restricted, ...]:
    """``[analysis.envelopes.NAME]`` tables; ``run`` the run's criteria, ``kinds`` the declared case kinds."""
    from shells.criteria import by_name

    out = []
    for name, table in expect_table(tables, "[analysis.envelopes]").items():
        where = f"analysis.envelopes.{check_name(name, '[analysis.envelopes]')}"
        table = expect_table(table, f"[{where}]")
        check_keys(table, ENVELOPE_KEYS, where)
        criteria = _criteria(table["criteria"], f"{where}.criteria", run) if "criteria" in table else run
        modes = _names(table["modes"], f"{where}.modes") if "modes" in table else ()
        for word in modes:
            if word not in FAMILIES and not any(word in by_name(c).modes for c in criteria):
                known = sorted({m for c in criteria for m in by_name(c).modes})
                raise DefinitionError(f"{where}.modes: '{word}' is not a mode of {', '.join(criteria)}"
                                      f"{suggest(word, known)}; give mode names or {' / '.join(FAMILIES)}")
        for c in criteria if modes else ():
            if not chosen_modes(by_name(c).modes, modes):
                raise DefinitionError(f"{where}: criterion '{c}' has none of the modes {', '.join(modes)}; leave it "
                                      "out of this envelope's criteria")
            if not separable(c) and set(chosen_modes(by_name(c).modes, modes)) != set(by_name(c).modes):
                raise DefinitionError(
                    f"{where}: criterion '{c}' does not evaluate its modes on allowables of their own (its modes "
                    "interact), so it cannot be restricted to some of them; restrict by criteria, or use max-stress "
                    "or max-strain for a mode restriction")
        kinds_kept = _names(table["kinds"], f"{where}.kinds") if "kinds" in table else ()
        for kind in kinds_kept:
            if kind not in kinds:
                raise DefinitionError(f"{where}.kinds: '{kind}' is not a case kind{suggest(kind, kinds)}; declared "
                                      f"kinds: {', '.join(kinds)}")
        cases = _names(table["cases"], f"{where}.cases") if "cases" in table else ()
        description = table.get("description", "")
        if not isinstance(description, str):
            raise DefinitionError(f"{where}.description must be a string")
        out.append(Restricted(name, criteria, modes, kinds_kept, cases, description))
    return tuple(out)
