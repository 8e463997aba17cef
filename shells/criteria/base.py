"""The failure-criterion base class: a small declarative description of one criterion.

The point state, the ratio conventions and the shared mode names are in
:mod:`shells.criteria.state`; the exact root solvers in :mod:`shells.criteria.roots`,
the bracketed search in :mod:`shells.criteria.search`, the registry in
:mod:`shells.criteria.registry` and the cached block driver in
:mod:`shells.criteria.dispatch`.
"""

from __future__ import annotations

from types import MappingProxyType

import numpy as np

from .. import params as P
from .prepared import generic_prepare, no_inside, no_point


class Criterion:
    """Declarative description of one failure criterion.

    Subclasses set the class attributes below and one staticmethod ``ratio``,
    a numba ``@njit(cache=True)`` function ``ratio(sm, sf, p) -> (sr, mode)``
    (float64, int64); ``p`` is the ply's property vector
    (:mod:`shells.params`). Nothing is instantiated.

    Attributes
    ----------
    name : str
        Registry key used in definition files.
    title : str
        Human-readable name with the source.
    modes : tuple of str
        Failure modes; ``ratio`` returns an index into it (-1: none).
    requires : mapping int -> tuple of str
        Material kind (``params.KIND_*``) -> property names the criterion
        needs. Kinds not listed are "not applicable". An entry ``"a|b"`` is
        satisfied when either property is defined.
    points : tuple of int
        Through-thickness points it applies at (0 bottom, 1 middle, 2 top).
    level : str
        ``"point"``: evaluated on the state at each ply point; ``"face"``: evaluated once per sandwich face
        on the face's mean stress (face resultant / face thickness, laminate axes in slots σ1, σ2, τ12)
        with the face's property vector, and recorded on every ply of the face at the middle point.
    convex : bool
        True when the criterion reads σ1, σ2, τ12 (and σ3) only and its safe region is convex in them:
        these stresses vary linearly through a ply, so the strength ratio at the middle is never below
        the smaller one at the faces and the kernel evaluates the faces only (docs/criteria.md).
        :meth:`convex_for` may refuse it for particular plies.
    prepare, point : numba functions, optional
        The prepared form (:mod:`shells.criteria.prepared`): ``prepare(p, out) -> form`` once per ply and
        ``point(sm, sf, c, m) -> (R, mode)`` with the ply's constants in row ``m`` of ``c``, the same
        arithmetic as ``ratio``. Without them the kernel calls ``ratio`` at every point.
    inside : numba function, optional
        ``inside(sm, sf, c, m, lam) -> bool`` on the prepared constants: True only when the ratio is known to
        exceed ``lam`` (:mod:`shells.criteria.prepared`); the default answers False.
    """

    name: str = ""
    title: str = ""
    modes: tuple = ()
    requires = MappingProxyType({})
    points: tuple = (0, 1, 2)
    level: str = "point"
    convex: bool = False
    ratio = None
    prepare = staticmethod(generic_prepare)
    point = staticmethod(no_point)
    inside = staticmethod(no_inside)

    def __init_subclass__(cls, **kwargs):
        super().__init_subclass__(**kwargs)
        if not cls.name or not cls.modes or cls.ratio is None:
            raise TypeError(f"criterion class {cls.__name__} must set name, modes and ratio")
        if cls.level not in ("point", "face"):
            raise TypeError(f"criterion {cls.name!r}: level must be 'point' or 'face'")
        if not set(cls.points) <= {0, 1, 2} or not cls.points:
            raise TypeError(f"criterion {cls.name!r}: points must be a non-empty subset of (0, 1, 2)")
        for kind, keys in cls.requires.items():
            if kind not in range(len(P.KIND_NAMES)):
                raise TypeError(f"criterion {cls.name!r}: unknown material kind {kind!r}")
            for entry in keys:
                for key in entry.split("|"):
                    if key not in P.INDEX:
                        raise TypeError(f"criterion {cls.name!r}: unknown property {key!r}")
        cls.requires = MappingProxyType({k: tuple(v) for k, v in cls.requires.items()})

    @classmethod
    def convex_for(cls, params: np.ndarray) -> bool:
        """Whether the safe region is convex for every ply of the property table ``params`` (nrows, NPARAM)."""
        return cls.convex

    @classmethod
    def missing(cls, p: np.ndarray) -> str | None:
        """The first ``requires`` entry the property vector ``p`` does not define, or None."""
        kind = int(p[P.KIND])
        for entry in cls.requires.get(kind, ()):
            if all(np.isnan(p[P.INDEX[key]]) for key in entry.split("|")):
                return entry
        return None
