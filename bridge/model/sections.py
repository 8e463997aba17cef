"""Sections of a definition's laminates (and, per zone, with the zone's offset)."""

from __future__ import annotations

from typing import Iterable

from shells.errors import DefinitionError
from shells.section import Section, build_section

from bridge.definition.loader import Definition
from bridge.definition.schema import suggest


def select_laminates(defn: Definition, names: Iterable[str]) -> tuple[str, ...]:
    """The laminates named (all when none), checked against the definition."""
    names = tuple(names) or tuple(defn.laminates)
    for name in names:
        if name not in defn.laminates:
            raise DefinitionError(f"--laminate {name}: no such laminate{suggest(name, defn.laminates)}; "
                                  f"defined: {', '.join(defn.laminates)}", defn.source)
    return names


def section_of(defn: Definition, name: str, offset: float | None = None) -> Section:
    """Build the section of laminate ``name`` with the definition's analysis settings."""
    lam = defn.laminates[name]
    if offset is not None:
        lam = lam.with_offset(offset)
    a = defn.analysis
    try:
        return build_section(lam, a.transverse_shear, a.shear_factor, a.wrinkling_coefficient)
    except DefinitionError as err:
        raise err.within(defn.source) from None


def build_sections(defn: Definition, names: Iterable[str]) -> dict[str, Section]:
    return {name: section_of(defn, name) for name in names}
