"""The grammar of stacking sequences: text → a small syntax tree of plies and groups (recursive descent)."""

from __future__ import annotations

import math
from dataclasses import dataclass

from .messages import error, unexpected
from .scan import DIGITS, MAX_COUNT_DIGITS, NAME_CHARS, scan_number, scan_signs, skip_digits, skip_spaces
from .spec import MAX_ANGLE, MAX_DEPTH, LayerSpec


@dataclass(frozen=True)
class Ply:
    """A ply term of the text: one ply, or two for a ``±`` pair."""

    layers: tuple[LayerSpec, ...]
    col: int                  # index of the term's first character
    star: int | None = None   # index of a trailing '*', if any


@dataclass(frozen=True)
class Group:
    """A bracketed or parenthesised group with its suffix."""

    items: tuple["Ply | Group", ...]
    col: int                  # index of the opening bracket (0 for an unbracketed stack)
    count: int = 1
    count_col: int | None = None
    mirror: bool = False
    middle: bool = False      # mirrored without repeating the last ply ('*')


def parse_stack(text: str) -> Group:
    """stack := '[' seq ']' suffix | seq, then the end of the text."""
    i = start = skip_spaces(text, 0)
    if i >= len(text):
        raise error(text, i, "the stacking sequence is empty", "list the ply angles, e.g. [0/45/-45/90]")
    if text[i] == "[":
        stack, i = parse_group(text, i, 0)
    else:
        items, i = parse_seq(text, i, 0)
        check_stars(text, items, mirror=False, count=1, closer=None)
        stack = Group(items, col=start)
    i = skip_spaces(text, i)
    if i < len(text):
        if text[i] in ")]":
            raise error(text, i, f"unmatched {text[i]!r}", "remove it or add the matching opening bracket")
        raise unexpected(text, i, "the end of the stacking sequence",
                         "put every ply inside one pair of brackets, separated by '/', with any count "
                          "or 's' right after the closing bracket")
    return stack


def parse_seq(text: str, i: int, depth: int) -> tuple[tuple[Ply | Group, ...], int]:
    """seq := item ('/' item)*"""
    items = []
    while True:
        i = skip_spaces(text, i)
        if i < len(text) and text[i] == "(":
            item, i = parse_group(text, i, depth + 1)
        else:
            item, i = parse_ply(text, i, first=not items)
        items.append(item)
        i = skip_spaces(text, i)
        if i >= len(text) or text[i] != "/":
            return tuple(items), i
        i += 1


def parse_group(text: str, i: int, depth: int) -> tuple[Group, int]:
    """group := '(' seq ')' suffix (or '[' seq ']' suffix at depth 0); suffix := [count] ['s']"""
    opener = text[i]
    closer = "]" if opener == "[" else ")"
    if depth > MAX_DEPTH:
        raise error(text, i, f"groups nest more than {MAX_DEPTH} deep",
                    "flatten the inner groups or multiply their repeat counts out")
    items, j = parse_seq(text, i + 1, depth)
    if j >= len(text):
        raise error(text, j, f"missing {closer!r} for the {opener!r} at column {i + 1}",
                    f"close the group with {closer!r}")
    if text[j] != closer:
        raise unexpected(text, j, f"'/' or {closer!r}", f"separate plies with '/' and close the group with {closer!r}")
    j = skip_spaces(text, j + 1)
    count, count_col, j = parse_count(text, j)
    j = skip_spaces(text, j)
    mirror = j < len(text) and text[j] in "sS"
    if mirror:
        j += 1
        if j < len(text) and text[j] in DIGITS:
            raise error(text, j, "a repeat count after the symmetry suffix",
                        "write the count before 's': [0/90]2s repeats 0/90 twice, then mirrors")
    k = skip_spaces(text, j)
    if k < len(text) and text[k] in ":@":
        raise error(text, k, f"{text[k]!r} after a group; material and thickness overrides apply to single plies",
                    "write the override on each ply inside the group, e.g. (0:cf-woven/90:cf-woven)")
    middle = check_stars(text, items, mirror=mirror, count=count, closer=closer)
    return Group(items, i, count, count_col, mirror, middle), j


def parse_count(text: str, i: int) -> tuple[int, int | None, int]:
    """An optional positive repeat count at ``i``: (count, its index or None, end index)."""
    j = skip_digits(text, i)
    if j == i:
        return 1, None, i
    digits = text[i:j]
    if digits.startswith("0"):
        raise error(text, i, f"repeat count {digits!r} is zero or starts with a zero",
                    "write a positive whole count without leading zeros, e.g. (0/90)3")
    if len(digits) > MAX_COUNT_DIGITS:
        raise error(text, i, f"a repeat count of {len(digits)} digits, beyond any ply cap",
                    "check the count; it multiplies the plies of its group")
    return int(digits), i, j


def check_stars(text: str, items: tuple[Ply | Group, ...], *, mirror: bool, count: int, closer: str | None) -> bool:
    """Check the '*' marks of a group's direct plies; return whether its last ply is the middle ply."""
    for k, item in enumerate(items):
        if not isinstance(item, Ply) or item.star is None:
            continue
        if k != len(items) - 1:
            raise error(text, item.star, "'*' on a ply that is not the last of its group",
                        "mark only the middle ply, the last one before the closing bracket of a symmetric group")
        if not mirror:
            raise error(text, item.star, "'*' marks the unrepeated middle ply of a symmetric group, but this "
                        "group has no 's'", f"add 's' after the closing {closer!r} or remove the '*'" if closer
                         else "enclose the stack in brackets with the suffix, e.g. [0/45/90*]s, or remove the '*'")
        if count != 1:
            raise error(text, item.star, "'*' in a group that also has a repeat count",
                        "move the repeat inside, e.g. [(0/90)2/45*]s")
        return True
    return False


def parse_ply(text: str, i: int, first: bool) -> tuple[Ply, int]:
    """ply := signs angle [':' name] ['@' thickness] ['*'] (the two overrides in either order)"""
    start = i
    signs, i = scan_signs(text, i)
    end = scan_number(text, i)
    if end == i:
        if i == start and i < len(text) and text[i] == "/":
            raise error(text, i, "no ply before this '/'", "remove the extra '/' or add the ply angle")
        if i == start and first and i < len(text) and text[i] in ")]":
            raise error(text, i, "an empty group", "list at least one ply inside the brackets, or remove them")
        if i == start and not first and (i >= len(text) or text[i] in ")]"):
            raise error(text, i, "no ply after the last '/'", "remove the trailing '/' or add the ply angle")
        raise unexpected(text, i, "a ply angle in degrees" if i == start else "digits of the ply angle",
                         "write a decimal angle such as 45, -45, 22.5, ±45 or +-45")
    literal = text[i:end]
    whole = literal.split(".")[0].split("e")[0].split("E")[0]
    if len(whole) > 1 and whole.startswith("0"):
        raise error(text, i, f"angle {literal!r} starts with a zero",
                    f"write a repeated ply as a group, e.g. ({whole[0]}){whole[1:]}, or the angle without the zero")
    value = float(literal)
    if not (math.isfinite(value) and value <= MAX_ANGLE):
        raise error(text, i, f"angle {literal} is more than {MAX_ANGLE:g} degrees",
                    "check for a repeat count run into the angle: write (90)2, not 902")
    material, thickness, star = None, None, None
    j = skip_spaces(text, end)
    while j < len(text) and text[j] in ":@":
        if text[j] == ":" and material is None:
            material, j = parse_name(text, skip_spaces(text, j + 1))
        elif text[j] == "@" and thickness is None:
            thickness, j = parse_thickness(text, skip_spaces(text, j + 1))
        else:
            raise error(text, j, f"a second {text[j]!r} on one ply", "give each ply one material and one thickness")
        j = skip_spaces(text, j)
    if j < len(text) and text[j] == "*":
        if len(signs) == 2:
            raise error(text, j, "'*' on a ± pair, which is two plies",
                        "write the middle ply on its own, e.g. [0/45/-45*]s")
        star, j = j, j + 1
    layers = tuple(LayerSpec(s * value + 0.0, material, thickness) for s in signs)
    return Ply(layers, start, star), j


def parse_name(text: str, i: int) -> tuple[str, int]:
    j = i
    while j < len(text) and text[j] in NAME_CHARS:
        j += 1
    if j == i or text[i] in "-_.":
        raise unexpected(text, i, "a material name after ':'",
                         "name the material with letters, digits, '-', '_' and '.', starting with a letter "
                          "or digit, e.g. 0:cf-ud")
    return text[i:j], j


def parse_thickness(text: str, i: int) -> tuple[float, int]:
    j = scan_number(text, i)
    if j == i:
        raise unexpected(text, i, "a ply thickness after '@'",
                         "write a positive number in the definition's length unit, e.g. 0@0.125")
    value = float(text[i:j])
    if not (math.isfinite(value) and value > 0):
        raise error(text, i, f"thickness {text[i:j]} is not a positive finite number",
                    "write a positive thickness in the definition's length unit, e.g. 0@0.125")
    return value, j
