"""Diagnosis of a failed comparison: which convention error, or pair of errors, explains the discrepancy.

Every hypothesis of :data:`postproc.hypotheses.HYPOTHESES` is tried on each failing zone; when no single one
brings the zone within tolerance, pairs are searched (the best variant of one hypothesis, then every variant of
another, in either order). A **best fix** is named only when it removes most of the discrepancy (residual below
:data:`BEST_FRACTION` of the original); otherwise the zone is "unexplained" and the three best partial
candidates are listed with their residuals.
"""

from __future__ import annotations

from .hypotheses import HYPOTHESES, Hypothesis, ZoneData

#: A best fix must leave less than this fraction of the zone's discrepancy.
BEST_FRACTION = 0.1
#: Partial candidates listed for an unexplained zone.
CANDIDATES = 3


def _fix_text(fixes, z: ZoneData) -> str:
    return "; ".join(f.replace("{zone}", z.name).replace("{laminate}", z.section.laminate.name) for f in fixes)


def _entry(names, explanations, variant: ZoneData, residual: float, base: float, rank: tuple) -> dict:
    return {"name": " + ".join(names), "explanation": "; ".join(explanations),
            "fix": _fix_text(variant.fixes, variant), "residual": residual,
            "removed": (1.0 - residual / base) if base > 0 else 0.0, "_rank": rank, "_variant": variant}


def _best_variant(h: type[Hypothesis], z: ZoneData):
    best = None
    for v in h.apply(z):
        r = v.residual()
        if best is None or r < best[0]:
            best = (r, v)
    return best


def diagnose_zone(z: ZoneData, tolerance: float) -> dict:
    """Test every hypothesis, and pairs when no single one explains the zone.

    Returns
    -------
    dict
        ``zone``; ``discrepancy`` (before); ``explained`` (hypotheses or pairs within tolerance, best first:
        ``name`` ("a" or "a + b"), ``explanation``, ``fix``, ``residual``, ``removed``); ``best`` (the best
        candidate when its residual is below 10 % of the discrepancy, else None); ``candidates`` (the three best
        candidates, whatever their residual, for an unexplained zone: empty when ``explained`` is not).
    """
    z = ZoneData(**{**z.__dict__, "fixes": ()})
    base = z.residual()
    singles = []
    for rank, h in enumerate(HYPOTHESES):
        best = _best_variant(h, z)
        if best is not None:
            singles.append(_entry([h.name], [h.explanation], best[1], best[0], base, (rank,)))
    found = list(singles)
    if not any(f["residual"] <= tolerance for f in singles):
        for first in singles:
            for rank, h in enumerate(HYPOTHESES):
                if rank == first["_rank"][0]:
                    continue
                best = _best_variant(h, first["_variant"])
                if best is not None:
                    found.append(_entry([HYPOTHESES[first["_rank"][0]].name, h.name],
                                        [HYPOTHESES[first["_rank"][0]].explanation, h.explanation],
                                        best[1], best[0], base, first["_rank"] + (rank,)))
    found.sort(key=lambda f: (f["residual"] > tolerance, len(f["_rank"]) if f["residual"] <= tolerance else 0,
                              f["residual"], f["_rank"]))
    seen, unique = set(), []
    for f in found:                                   # a pair found in both orders is listed once
        key = frozenset(f["name"].split(" + "))
        if key not in seen:
            seen.add(key)
            unique.append(f)
        f.pop("_rank")
        f.pop("_variant")
    found = unique
    explained = [f for f in found if f["residual"] <= tolerance]
    top = found[0] if found and found[0]["residual"] < BEST_FRACTION * base else None
    return {"zone": z.name, "discrepancy": base, "explained": explained, "best": top,
            "candidates": [] if explained else found[:CANDIDATES]}


def diagnose(zones, tolerance: float) -> list[dict]:
    """:func:`diagnose_zone` on every zone that fails the tolerance (the others are left out)."""
    return [diagnose_zone(z, tolerance) for z in zones if z.residual() > tolerance]


__all__ = ["HYPOTHESES", "Hypothesis", "ZoneData", "diagnose", "diagnose_zone"]
