"""Stacking-sequence notation: text such as ``[0/±45/90]s`` to a tuple of plies.

The notation is documented for analysts in ``docs/layup.md``. Plies are listed
from ply 1 (the bottom, most negative z) upward and angles are in degrees,
counter-clockwise about the normal from the laminate x axis
(``docs/conventions.md``).

The parser is a hand-written recursive descent over the characters of the text,
bounded in text length (:data:`MAX_TEXT`), nesting depth (:data:`MAX_DEPTH`) and
expanded size (``max_plies``). The text is first parsed into a small syntax tree,
its expanded size is computed from the repeat counts, and only then, when the
size is within the cap, is the tree expanded. Every problem raises
:class:`shells.errors.LayupError` naming the text, the 1-based column and the fix.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import chain

from .errors import LayupError

MAX_PLIES = 2000
"""Default cap on the expanded ply count."""

MAX_TEXT = 10_000
"""Longest stacking-sequence text accepted, in characters."""

MAX_DEPTH = 8
"""Deepest nesting of parenthesised groups."""

MAX_ANGLE = 360.0
"""Largest ply angle magnitude accepted, in degrees (catches run-together counts such as ``902``)."""

_MAX_COUNT_DIGITS = 100  # longer counts cannot be converted cheaply and always exceed any cap

_SIGNS = {"+": 1.0, "-": -1.0, "\u2212": -1.0}            # plus, hyphen-minus, minus sign
_PAIRS = {"\u00b1": (1.0, -1.0), "\u2213": (-1.0, 1.0)}   # ±, ∓
_NAME_CHARS = frozenset("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-_.")
_DIGITS = frozenset("0123456789")
_EXCERPT = 60

_SUFFIX_HINT = "a symmetry suffix goes right after a closing bracket or parenthesis, e.g. [0/90]s"
_HINTS = {
    ",": "separate plies with '/' and write decimals with a point, e.g. [0/45/22.5]",
    ";": "separate plies with '/', e.g. [0/45/90]",
    "[": "square brackets enclose the whole stack only; use parentheses for inner groups, e.g. [0/(±45)2]",
    "{": "use parentheses for groups, e.g. (0/90)2",
    "_": "write a repeated ply as a group with a count, e.g. (0)2 for two 0° plies",
    "\u00b0": "leave out the degree sign; angles are always in degrees",
    "\u2013": "write a minus as '-' (the en dash is not a sign)",
    "\u2014": "write a minus as '-' (the em dash is not a sign)",
    "s": _SUFFIX_HINT,
    "S": _SUFFIX_HINT,
}


@dataclass(frozen=True)
class LayerSpec:
    """One ply of an expanded stacking sequence.

    Parameters
    ----------
    angle : float
        Ply angle θ in degrees, counter-clockwise about the normal from the
        laminate x axis to the ply's 1 (fibre) axis.
    material : str or None
        Per-ply material name overriding the laminate's default; None keeps the
        default.
    thickness : float or None
        Per-ply thickness overriding the material's or laminate's default, in the
        definition's length unit; None keeps the default.
    """

    angle: float
    material: str | None = None
    thickness: float | None = None


@dataclass(frozen=True)
class _Ply:
    """A ply term of the text: one ply, or two for a ``±`` pair."""

    layers: tuple[LayerSpec, ...]
    col: int                  # index of the term's first character
    star: int | None = None   # index of a trailing '*', if any


@dataclass(frozen=True)
class _Group:
    """A bracketed or parenthesised group with its suffix."""

    items: tuple["_Ply | _Group", ...]
    col: int                  # index of the opening bracket (0 for an unbracketed stack)
    count: int = 1
    count_col: int | None = None
    mirror: bool = False
    middle: bool = False      # mirrored without repeating the last ply ('*')


def parse_layup(text: str, *, max_plies: int = MAX_PLIES) -> tuple[LayerSpec, ...]:
    """Expand a stacking sequence, listed from ply 1 (bottom) upward.

    Parameters
    ----------
    text : str
        The stacking sequence, e.g. ``"[0/±45/90]s"``, ``"[(+-45)2/0:cf-woven@0.3]"``
        or ``"[0/45/90:honeycomb@12.7*]s"``; the notation is in ``docs/layup.md``.
        At most :data:`MAX_TEXT` characters.
    max_plies : int, optional
        Cap on the expanded ply count, checked from the repeat counts before any
        expansion (default :data:`MAX_PLIES`).

    Returns
    -------
    tuple of LayerSpec
        The plies in stacking order, ply 1 (most negative z) first. Angles in
        degrees in laminate axes; overrides None where the text gives none.

    Raises
    ------
    shells.errors.LayupError
        When the text is not a string, is empty, too long, malformed, nests
        groups deeper than :data:`MAX_DEPTH`, or expands beyond ``max_plies``.
        The message names the text, the 1-based column and the fix.
    """
    if not isinstance(text, str):
        raise LayupError(f"layup {text!r}: a stacking sequence must be text such as '[0/45/90]s'")
    if isinstance(max_plies, bool) or not isinstance(max_plies, int) or max_plies < 1:
        raise LayupError(f"max_plies = {max_plies!r} must be a positive whole number of plies")
    if len(text) > MAX_TEXT:
        raise _error(text, MAX_TEXT, f"the text is {len(text)} characters long, more than the limit of {MAX_TEXT}",
                     "shorten it with repeat counts, e.g. (0/90)20 instead of listing 40 plies")
    stack = _parse_stack(text)
    _measure(text, stack, max_plies, root=True)
    return _expand(stack)


# ----------------------------------------------------------------------------- errors

def _shown(text: str, i: int) -> str:
    """The text as quoted in a message, cut to an excerpt around index ``i`` when long."""
    if len(text) <= _EXCERPT:
        return repr(text)
    lo = max(0, min(i - _EXCERPT // 2, len(text) - _EXCERPT))
    part = ("…" if lo > 0 else "") + text[lo:lo + _EXCERPT] + ("…" if lo + _EXCERPT < len(text) else "")
    return f"{part!r} ({len(text)} characters)"


def _error(text: str, i: int, problem: str, fix: str) -> LayupError:
    """A LayupError at index ``i`` (reported as the 1-based column)."""
    return LayupError(f"layup {_shown(text, i)}: column {i + 1}: {problem}; {fix}")


def _unexpected(text: str, i: int, expected: str, fix: str) -> LayupError:
    """An error for the character at ``i`` (or the end), with a specific hint for common slips."""
    if i >= len(text):
        return _error(text, i, f"expected {expected}, found the end of the text", fix)
    return _error(text, i, f"expected {expected}, found {text[i]!r}", _HINTS.get(text[i], fix))


# ----------------------------------------------------------------------------- scanning

def _skip(text: str, i: int) -> int:
    while i < len(text) and text[i].isspace():
        i += 1
    return i


def _digits(text: str, i: int) -> int:
    while i < len(text) and text[i] in _DIGITS:
        i += 1
    return i


def _scan_number(text: str, i: int) -> int:
    """End index of a decimal literal (``12``, ``12.5``, ``.5``, ``1.5e-4``) at ``i``; ``i`` if none."""
    j = _digits(text, i)
    if j < len(text) and text[j] == ".":
        k = _digits(text, j + 1)
        if k > j + 1 or j > i:
            j = k
    if j == i:
        return i
    if j < len(text) and text[j] in "eE":
        k = j + 2 if j + 1 < len(text) and text[j + 1] in "+-" else j + 1
        end = _digits(text, k)
        if end > k:
            j = end
    return j


def _scan_signs(text: str, i: int) -> tuple[tuple[float, ...], int]:
    """Signs of a ply term at ``i``: one factor, or two for a pair (``±``, ``∓``, ``+-``, ``-+``)."""
    if i < len(text) and text[i] in _PAIRS:
        return _PAIRS[text[i]], i + 1
    if i < len(text) and text[i] in _SIGNS:
        first = _SIGNS[text[i]]
        if i + 1 < len(text) and text[i + 1] in _SIGNS and _SIGNS[text[i + 1]] != first:
            return (first, -first), i + 2
        return (first,), i + 1
    return (1.0,), i


# ----------------------------------------------------------------------------- grammar

def _parse_stack(text: str) -> _Group:
    """stack := '[' seq ']' suffix | seq, then the end of the text."""
    i = start = _skip(text, 0)
    if i >= len(text):
        raise _error(text, i, "the stacking sequence is empty", "list the ply angles, e.g. [0/45/-45/90]")
    if text[i] == "[":
        stack, i = _parse_group(text, i, 0)
    else:
        items, i = _parse_seq(text, i, 0)
        _check_stars(text, items, mirror=False, count=1, closer=None)
        stack = _Group(items, col=start)
    i = _skip(text, i)
    if i < len(text):
        if text[i] in ")]":
            raise _error(text, i, f"unmatched {text[i]!r}", "remove it or add the matching opening bracket")
        raise _unexpected(text, i, "the end of the stacking sequence",
                          "put every ply inside one pair of brackets, separated by '/', with any count "
                          "or 's' right after the closing bracket")
    return stack


def _parse_seq(text: str, i: int, depth: int) -> tuple[tuple[_Ply | _Group, ...], int]:
    """seq := item ('/' item)*"""
    items = []
    while True:
        i = _skip(text, i)
        if i < len(text) and text[i] == "(":
            item, i = _parse_group(text, i, depth + 1)
        else:
            item, i = _parse_ply(text, i, first=not items)
        items.append(item)
        i = _skip(text, i)
        if i >= len(text) or text[i] != "/":
            return tuple(items), i
        i += 1


def _parse_group(text: str, i: int, depth: int) -> tuple[_Group, int]:
    """group := '(' seq ')' suffix (or '[' seq ']' suffix at depth 0); suffix := [count] ['s']"""
    opener = text[i]
    closer = "]" if opener == "[" else ")"
    if depth > MAX_DEPTH:
        raise _error(text, i, f"groups nest more than {MAX_DEPTH} deep",
                     "flatten the inner groups or multiply their repeat counts out")
    items, j = _parse_seq(text, i + 1, depth)
    if j >= len(text):
        raise _error(text, j, f"missing {closer!r} for the {opener!r} at column {i + 1}",
                     f"close the group with {closer!r}")
    if text[j] != closer:
        raise _unexpected(text, j, f"'/' or {closer!r}", f"separate plies with '/' and close the group with {closer!r}")
    j = _skip(text, j + 1)
    count, count_col, j = _parse_count(text, j)
    j = _skip(text, j)
    mirror = j < len(text) and text[j] in "sS"
    if mirror:
        j += 1
        if j < len(text) and text[j] in _DIGITS:
            raise _error(text, j, "a repeat count after the symmetry suffix",
                         "write the count before 's': [0/90]2s repeats 0/90 twice, then mirrors")
    k = _skip(text, j)
    if k < len(text) and text[k] in ":@":
        raise _error(text, k, f"{text[k]!r} after a group; material and thickness overrides apply to single plies",
                     "write the override on each ply inside the group, e.g. (0:cf-woven/90:cf-woven)")
    middle = _check_stars(text, items, mirror=mirror, count=count, closer=closer)
    return _Group(items, i, count, count_col, mirror, middle), j


def _parse_count(text: str, i: int) -> tuple[int, int | None, int]:
    """An optional positive repeat count at ``i``: (count, its index or None, end index)."""
    j = _digits(text, i)
    if j == i:
        return 1, None, i
    digits = text[i:j]
    if digits.startswith("0"):
        raise _error(text, i, f"repeat count {digits!r} is zero or starts with a zero",
                     "write a positive whole count without leading zeros, e.g. (0/90)3")
    if len(digits) > _MAX_COUNT_DIGITS:
        raise _error(text, i, f"a repeat count of {len(digits)} digits, beyond any ply cap",
                     "check the count; it multiplies the plies of its group")
    return int(digits), i, j


def _check_stars(text: str, items: tuple[_Ply | _Group, ...], *, mirror: bool, count: int, closer: str | None) -> bool:
    """Check the '*' marks of a group's direct plies; return whether its last ply is the middle ply."""
    for k, item in enumerate(items):
        if not isinstance(item, _Ply) or item.star is None:
            continue
        if k != len(items) - 1:
            raise _error(text, item.star, "'*' on a ply that is not the last of its group",
                         "mark only the middle ply, the last one before the closing bracket of a symmetric group")
        if not mirror:
            raise _error(text, item.star, "'*' marks the unrepeated middle ply of a symmetric group, but this "
                         "group has no 's'", f"add 's' after the closing {closer!r} or remove the '*'" if closer
                         else "enclose the stack in brackets with the suffix, e.g. [0/45/90*]s, or remove the '*'")
        if count != 1:
            raise _error(text, item.star, "'*' in a group that also has a repeat count",
                         "move the repeat inside, e.g. [(0/90)2/45*]s")
        return True
    return False


def _parse_ply(text: str, i: int, first: bool) -> tuple[_Ply, int]:
    """ply := signs angle [':' name] ['@' thickness] ['*'] (the two overrides in either order)"""
    start = i
    signs, i = _scan_signs(text, i)
    end = _scan_number(text, i)
    if end == i:
        if i == start and i < len(text) and text[i] == "/":
            raise _error(text, i, "no ply before this '/'", "remove the extra '/' or add the ply angle")
        if i == start and first and i < len(text) and text[i] in ")]":
            raise _error(text, i, "an empty group", "list at least one ply inside the brackets, or remove them")
        if i == start and not first and (i >= len(text) or text[i] in ")]"):
            raise _error(text, i, "no ply after the last '/'", "remove the trailing '/' or add the ply angle")
        raise _unexpected(text, i, "a ply angle in degrees" if i == start else "digits of the ply angle",
                          "write a decimal angle such as 45, -45, 22.5, ±45 or +-45")
    literal = text[i:end]
    whole = literal.split(".")[0].split("e")[0].split("E")[0]
    if len(whole) > 1 and whole.startswith("0"):
        raise _error(text, i, f"angle {literal!r} starts with a zero",
                     f"write a repeated ply as a group, e.g. ({whole[0]}){whole[1:]}, or the angle without the zero")
    value = float(literal)
    if not (math.isfinite(value) and value <= MAX_ANGLE):
        raise _error(text, i, f"angle {literal} is more than {MAX_ANGLE:g} degrees",
                     "check for a repeat count run into the angle: write (90)2, not 902")
    material, thickness, star = None, None, None
    j = _skip(text, end)
    while j < len(text) and text[j] in ":@":
        if text[j] == ":" and material is None:
            material, j = _parse_name(text, _skip(text, j + 1))
        elif text[j] == "@" and thickness is None:
            thickness, j = _parse_thickness(text, _skip(text, j + 1))
        else:
            raise _error(text, j, f"a second {text[j]!r} on one ply", "give each ply one material and one thickness")
        j = _skip(text, j)
    if j < len(text) and text[j] == "*":
        if len(signs) == 2:
            raise _error(text, j, "'*' on a ± pair, which is two plies",
                         "write the middle ply on its own, e.g. [0/45/-45*]s")
        star, j = j, j + 1
    layers = tuple(LayerSpec(s * value + 0.0, material, thickness) for s in signs)
    return _Ply(layers, start, star), j


def _parse_name(text: str, i: int) -> tuple[str, int]:
    j = i
    while j < len(text) and text[j] in _NAME_CHARS:
        j += 1
    if j == i or text[i] in "-_.":
        raise _unexpected(text, i, "a material name after ':'",
                          "name the material with letters, digits, '-', '_' and '.', starting with a letter "
                          "or digit, e.g. 0:cf-ud")
    return text[i:j], j


def _parse_thickness(text: str, i: int) -> tuple[float, int]:
    j = _scan_number(text, i)
    if j == i:
        raise _unexpected(text, i, "a ply thickness after '@'",
                          "write a positive number in the definition's length unit, e.g. 0@0.125")
    value = float(text[i:j])
    if not (math.isfinite(value) and value > 0):
        raise _error(text, i, f"thickness {text[i:j]} is not a positive finite number",
                     "write a positive thickness in the definition's length unit, e.g. 0@0.125")
    return value, j


# ----------------------------------------------------------------------------- size and expansion

def _measure(text: str, node: _Ply | _Group, cap: int, root: bool = False) -> int:
    """Expanded ply count of ``node``; raise as soon as any part exceeds ``cap``."""
    if isinstance(node, _Ply):
        return len(node.layers)
    size = 0
    for item in node.items:
        size += _measure(text, item, cap)
        if size > cap:
            raise _too_many(text, item.col, size, cap, exact=False)
    size *= node.count
    if node.mirror:
        size = 2 * size - node.middle
    if size > cap:
        raise _too_many(text, node.count_col if node.count_col is not None else node.col, size, cap, exact=root)
    return size


def _too_many(text: str, i: int, size: int, cap: int, exact: bool) -> LayupError:
    amount = f"{size}" if exact else f"at least {size}"
    return _error(text, i, f"the stack expands to {amount} plies, more than the cap of {cap}",
                  "check the repeat counts, or raise the cap (max_plies) if the laminate really is that thick")


def _expand(node: _Ply | _Group) -> tuple[LayerSpec, ...]:
    """The plies of ``node`` in stacking order: repeat, then mirror."""
    if isinstance(node, _Ply):
        return node.layers
    body = tuple(chain.from_iterable(_expand(item) for item in node.items)) * node.count
    if node.mirror:
        body = body + (body[-2::-1] if node.middle else body[::-1])
    return body
