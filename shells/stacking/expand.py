"""Size of a parsed stacking sequence (checked against the cap before anything is built) and its expansion."""

from __future__ import annotations

from itertools import chain

from ..errors import LayupError
from .grammar import Group, Ply
from .messages import error
from .spec import LayerSpec


def measure(text: str, node: Ply | Group, cap: int, root: bool = False) -> int:
    """Expanded ply count of ``node``; raise as soon as any part exceeds ``cap``."""
    if isinstance(node, Ply):
        return len(node.layers)
    size = 0
    for item in node.items:
        size += measure(text, item, cap)
        if size > cap:
            raise too_many(text, item.col, size, cap, exact=False)
    size *= node.count
    if node.mirror:
        size = 2 * size - node.middle
    if size > cap:
        raise too_many(text, node.count_col if node.count_col is not None else node.col, size, cap, exact=root)
    return size


def too_many(text: str, i: int, size: int, cap: int, exact: bool) -> LayupError:
    amount = f"{size}" if exact else f"at least {size}"
    return error(text, i, f"the stack expands to {amount} plies, more than the cap of {cap}",
                 "check the repeat counts, or raise the cap (max_plies) if the laminate really is that thick")


def expand(node: Ply | Group) -> tuple[LayerSpec, ...]:
    """The plies of ``node`` in stacking order: repeat, then mirror."""
    if isinstance(node, Ply):
        return node.layers
    body = tuple(chain.from_iterable(expand(item) for item in node.items)) * node.count
    if node.mirror:
        body = body + (body[-2::-1] if node.middle else body[::-1])
    return body
