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

from ..errors import LayupError
from .expand import expand, measure
from .grammar import parse_stack
from .messages import error
from .spec import MAX_ANGLE, MAX_DEPTH, MAX_PLIES, MAX_TEXT, LayerSpec

__all__ = ["MAX_ANGLE", "MAX_DEPTH", "MAX_PLIES", "MAX_TEXT", "LayerSpec", "parse_layup"]


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
        raise error(text, MAX_TEXT, f"the text is {len(text)} characters long, more than the limit of {MAX_TEXT}",
                    "shorten it with repeat counts, e.g. (0/90)20 instead of listing 40 plies")
    stack = parse_stack(text)
    measure(text, stack, max_plies, root=True)
    return expand(stack)
