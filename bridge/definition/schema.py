"""Checking tables of a definition file against a key specification.

A specification maps each allowed key to its quantity kind (see
:class:`bridge.definition.units.UnitSystem`), or to one of the non-quantity kinds
``"str"``, ``"bool"``, ``"int"``, ``"any"``. Unknown keys are refused with the
closest known key suggested, since they are nearly always typos.
"""

from __future__ import annotations

import difflib
from typing import Any, Iterable, Mapping

from shells.errors import DefinitionError

from bridge.definition.units import UnitSystem, convert

MAX_NAME = 200


def suggest(word: str, known: Iterable[str]) -> str:
    """' (did you mean 'X'?)' for the closest known word, or ''."""
    close = difflib.get_close_matches(str(word), list(known), n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""


def check_keys(table: Mapping[str, Any], allowed: Iterable[str], where: str,
               required: Iterable[str] = ()) -> None:
    """Refuse unknown keys (suggesting the close match) and missing required ones."""
    allowed = list(allowed)
    for key in table:
        if key not in allowed:
            raise DefinitionError(
                f"[{where}]: unknown key '{key}'{suggest(key, allowed)}; known keys: {', '.join(sorted(allowed))}")
    for key in required:
        if key not in table:
            raise DefinitionError(f"[{where}]: missing key '{key}'; add {key} = ...")


def expect_table(value: Any, where: str) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        raise DefinitionError(f"{where} must be a table, got {type(value).__name__}")
    return value


def check_name(name: Any, where: str) -> str:
    """Names of materials, laminates, cases: non-empty printable strings of bounded length."""
    if not isinstance(name, str) or not name.strip():
        raise DefinitionError(f"{where}: a name must be a non-empty string")
    if len(name) > MAX_NAME:
        raise DefinitionError(f"{where}: the name '{name[:40]}…' is longer than {MAX_NAME} characters; shorten it")
    if any(ord(ch) < 32 or ord(ch) == 127 for ch in name):
        raise DefinitionError(f"{where}: the name {name!r} contains control characters; remove them")
    return name


def take(table: Mapping[str, Any], spec: Mapping[str, str], where: str, units: UnitSystem,
         required: Iterable[str] = ()) -> dict[str, Any]:
    """Check ``table`` against ``spec`` and convert every entry.

    Returns
    -------
    dict
        The converted entries (floats in ``units`` for quantity kinds).
    """
    check_keys(table, spec, where, required)
    out: dict[str, Any] = {}
    for key, value in table.items():
        kind = spec[key]
        entry = f"{where}.{key}"
        if kind == "any":
            out[key] = value
        elif kind == "str":
            if not isinstance(value, str):
                raise DefinitionError(f"{entry} must be a string, got {value!r}")
            out[key] = value
        elif kind == "bool":
            if not isinstance(value, bool):
                raise DefinitionError(f"{entry} must be true or false, got {value!r}")
            out[key] = value
        elif kind == "int":
            if isinstance(value, bool) or not isinstance(value, int):
                raise DefinitionError(f"{entry} must be a whole number, got {value!r}")
            out[key] = value
        else:
            out[key] = convert(value, kind, units, entry)
    return out
