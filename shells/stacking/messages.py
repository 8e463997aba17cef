"""Error messages of the stacking-sequence parser: the text, the 1-based column and the fix."""

from __future__ import annotations

from ..errors import LayupError

EXCERPT = 60

SUFFIX_HINT = "a symmetry suffix goes right after a closing bracket or parenthesis, e.g. [0/90]s"
HINTS = {
    ",": "separate plies with '/' and write decimals with a point, e.g. [0/45/22.5]",
    ";": "separate plies with '/', e.g. [0/45/90]",
    "[": "square brackets enclose the whole stack only; use parentheses for inner groups, e.g. [0/(±45)2]",
    "{": "use parentheses for groups, e.g. (0/90)2",
    "_": "write a repeated ply as a group with a count, e.g. (0)2 for two 0° plies",
    "\u00b0": "leave out the degree sign; angles are always in degrees",
    "\u2013": "write a minus as '-' (the en dash is not a sign)",
    "\u2014": "write a minus as '-' (the em dash is not a sign)",
    "s": SUFFIX_HINT,
    "S": SUFFIX_HINT,
}


def shown(text: str, i: int) -> str:
    """The text as quoted in a message, cut to an excerpt around index ``i`` when long."""
    if len(text) <= EXCERPT:
        return repr(text)
    lo = max(0, min(i - EXCERPT // 2, len(text) - EXCERPT))
    part = ("…" if lo > 0 else "") + text[lo:lo + EXCERPT] + ("…" if lo + EXCERPT < len(text) else "")
    return f"{part!r} ({len(text)} characters)"


def error(text: str, i: int, problem: str, fix: str) -> LayupError:
    """A LayupError at index ``i`` (reported as the 1-based column)."""
    return LayupError(f"layup {shown(text, i)}: column {i + 1}: {problem}; {fix}")


def unexpected(text: str, i: int, expected: str, fix: str) -> LayupError:
    """An error for the character at ``i`` (or the end), with a specific hint for common slips."""
    if i >= len(text):
        return error(text, i, f"expected {expected}, found the end of the text", fix)
    return error(text, i, f"expected {expected}, found {text[i]!r}", HINTS.get(text[i], fix))
