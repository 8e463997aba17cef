"""Character-level scanning of a stacking sequence: spaces, digits, numbers and signs."""

from __future__ import annotations

MAX_COUNT_DIGITS = 100  # longer counts cannot be converted cheaply and always exceed any cap

MAX_COUNT_DIGITS = 100  # longer counts cannot be converted cheaply and always exceed any cap

SIGNS = {"+": 1.0, "-": -1.0, "\u2212": -1.0}            # plus, hyphen-minus, minus sign
PAIRS = {"\u00b1": (1.0, -1.0), "\u2213": (-1.0, 1.0)}   # ±, ∓
NAME_CHARS = frozenset("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-_.")
DIGITS = frozenset("0123456789")


def skip_spaces(text: str, i: int) -> int:
    while i < len(text) and text[i].isspace():
        i += 1
    return i


def skip_digits(text: str, i: int) -> int:
    while i < len(text) and text[i] in DIGITS:
        i += 1
    return i


def scan_number(text: str, i: int) -> int:
    """End index of a decimal literal (``12``, ``12.5``, ``.5``, ``1.5e-4``) at ``i``; ``i`` if none."""
    j = skip_digits(text, i)
    if j < len(text) and text[j] == ".":
        k = skip_digits(text, j + 1)
        if k > j + 1 or j > i:
            j = k
    if j == i:
        return i
    if j < len(text) and text[j] in "eE":
        k = j + 2 if j + 1 < len(text) and text[j + 1] in "+-" else j + 1
        end = skip_digits(text, k)
        if end > k:
            j = end
    return j


def scan_signs(text: str, i: int) -> tuple[tuple[float, ...], int]:
    """Signs of a ply term at ``i``: one factor, or two for a pair (``±``, ``∓``, ``+-``, ``-+``)."""
    if i < len(text) and text[i] in PAIRS:
        return PAIRS[text[i]], i + 1
    if i < len(text) and text[i] in SIGNS:
        first = SIGNS[text[i]]
        if i + 1 < len(text) and text[i + 1] in SIGNS and SIGNS[text[i + 1]] != first:
            return (first, -first), i + 2
        return (first,), i + 1
    return (1.0,), i
