"""Checking tables of a definition file against a key specification.

A specification maps each allowed key to its quantity kind (see
:class:`bridge.definition.units.UnitSystem`), or to one of the non-quantity kinds
``"str"``, ``"bool"``, ``"int"``, ``"any"``. Unknown keys are refused with the
closest known key suggested, since they are nearly always typos.
"""

from __future__ import annotations

import difflib
import unicodedata
from typing import Any, Iterable, Mapping

from shells.errors import DefinitionError, InputError, is_control, printable

from bridge.definition.units import UnitSystem, convert

#: Longest name (characters, after NFC normalisation): materials, laminates, zones, cases, every table key.
MAX_NAME = 200
#: Longest string value of a definition (a layup, a unit, a title); ``description`` is bounded by the file only.
MAX_TEXT = 10_000
#: String values that may span lines (newlines and tabs allowed, no other control character).
MULTILINE = ("description",)


_CONTROL_NAMES = {"\n": "line feed", "\r": "carriage return", "\t": "tab", "\x00": "nul", "\x1b": "escape",
                  "\x7f": "delete", "\x85": "next line", "\x9b": "control sequence introducer"}


def _char(ch: str) -> str:
    """``U+001B escape``: the code point and a plain name of a character."""
    name = _CONTROL_NAMES.get(ch) or unicodedata.name(ch, "").lower() or (
        "a C1 control" if 0x80 <= ord(ch) <= 0x9F else "a C0 control")
    return f"U+{ord(ch):04X} {name}"


def check_text(text: str, where: str, what: str = "the name", limit: int = MAX_NAME,
               allow: str = "", error: type[InputError] = DefinitionError, source: str | None = None) -> str:
    """``text`` in Unicode NFC form, refused when longer than ``limit`` or holding a control character.

    Control characters are C0 and C1 controls (NUL, TAB, newline, ESC, U+0085 …), DEL, line and paragraph
    separators and bidirectional controls (:func:`shells.errors.is_control`); ``allow`` lists exceptions.
    The refusal names the character and its 1-based position.
    """
    text = unicodedata.normalize("NFC", text)
    for pos, ch in enumerate(text, 1):
        if is_control(ch) and ch not in allow:
            raise error(f"{where}: {what} '{printable(text[:60])}{'…' if len(text) > 60 else ''}' holds a control "
                        f"character at position {pos} ({_char(ch)}); remove it", source)
    if len(text) > limit:
        raise error(f"{where}: {what} '{printable(text[:40])}…' is {len(text)} characters long, more than "
                    f"{limit}; shorten it", source)
    return text


def clean_document(doc: Any, where: str = "") -> Any:
    """A copy of a parsed definition with every key and string in NFC form, checked.

    Keys are names (:func:`check_text`: no control character, at most :data:`MAX_NAME` characters); two keys of
    one table that differ only in normalisation are refused as one name given twice. String values may be
    :data:`MAX_TEXT` characters long; only :data:`MULTILINE` values may hold newlines and tabs.
    """
    if isinstance(doc, Mapping):
        out: dict[str, Any] = {}
        for key, value in doc.items():
            label = f"{where}.{printable(str(key))}" if where else printable(str(key))
            name = check_text(str(key), f"[{where or 'top level'}]", "the key")
            if name in out:
                raise DefinitionError(f"[{where or 'top level'}]: the key {name!r} is given twice (the two "
                                      "spellings differ only in Unicode normalisation); keep one")
            out[name] = clean_document(value, label) if not isinstance(value, str) else check_text(
                value, label, "the text", MAX_TEXT, "\n\t\r" if name in MULTILINE else "")
        return out
    if isinstance(doc, list):
        return [clean_document(v, f"{where}[{i + 1}]") if not isinstance(v, str)
                else check_text(v, f"{where}[{i + 1}]", "the text", MAX_TEXT) for i, v in enumerate(doc)]
    return doc


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


def check_name(name: Any, where: str, error: type[InputError] = DefinitionError, source: str | None = None) -> str:
    """Names of materials, laminates, zones, cases: non-empty strings in NFC form, at most :data:`MAX_NAME`
    characters, without control characters (:func:`check_text`)."""
    if not isinstance(name, str) or not name.strip():
        raise error(f"{where}: a name must be a non-empty string", source)
    return check_text(name, where, "the name", MAX_NAME, "", error, source)


def check_names(names: Iterable[Any], where: str, error: type[InputError] = DefinitionError,
                source: str | None = None) -> tuple[str, ...]:
    """:func:`check_name` on each name, refusing a name given twice (also when only the normalisation differs)."""
    out: dict[str, int] = {}
    for k, raw in enumerate(names):
        name = check_name(raw, f"{where}[{k + 1}]", error, source)
        if name in out:
            raise error(f"{where}: the name {name!r} is given twice (items {out[name] + 1} and {k + 1}); "
                        "name each once", source)
        out[name] = k
    return tuple(out)


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
