"""Sections of a definition's laminates (and, per zone, with the zone's offset).

One precedence rule for the reference-surface offset of a zone's section: the zone's ``offset``, else
the laminate's ``offset``, else 0 (:func:`zone_offset`). ``section``, ``assign`` and ``recover`` all
build their sections through it.
"""

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


def zone_offset(defn: Definition, zone) -> float:
    """The offset of a zone's section: the zone's ``offset``, else its laminate's ``offset`` (default 0)."""
    if zone.offset is not None:
        return float(zone.offset)
    return float(defn.laminates[zone.laminate].offset)


def section_of(defn: Definition, name: str, offset: float | None = None,
               angles: dict[str, float] | None = None) -> Section:
    """Build the section of laminate ``name`` with the definition's analysis settings.

    ``offset`` replaces the laminate's own offset when given (see :func:`zone_offset`); ``angles`` gives the
    value (degrees) of each angle field the laminate's plies take their angles from.
    """
    lam = defn.laminates[name]
    if lam.angle_fields:
        if angles is None:
            raise DefinitionError(f"laminate '{name}' takes ply angles from the mesh field(s) "
                                  f"{', '.join(lam.angle_fields)}: its section depends on the cell; see it "
                                  "through assign or recover with a mesh", defn.source)
        lam = lam.with_field_angles(angles)
    if offset is not None:
        lam = lam.with_offset(offset)
    a = defn.analysis
    try:
        return build_section(lam, a.transverse_shear, a.shear_factor, a.wrinkling_coefficient)
    except DefinitionError as err:
        raise err.within(defn.source) from None


def build_sections(defn: Definition, names: Iterable[str]) -> dict[str, Section]:
    """Sections of the named laminates (a laminate whose angles come from a mesh field is refused)."""
    return {name: section_of(defn, name) for name in names}
