"""In-situ transverse tensile and in-plane shear strengths of plies by their position in the layup.

A ply constrained by its neighbours cracks at a higher transverse stress than the unidirectional specimen, and
the thinner it is the higher (Camanho, Dávila, Pinho, Iannucci & Robinson, "Prediction of in situ strengths
and matrix cracking in composites under transverse tension and in-plane shear", Composites Part A 37 (2006)
165–176; linear shear response). With Λ22⁰ = 2(1/E2 − ν21²/E1) and t the ply's (cluster's) thickness:

- thick embedded ply: Yt_is = 1.12·√2·Yt, S_is = √2·S12;
- thin embedded ply: Yt_is = sqrt(8·G_Ic/(π·t·Λ22⁰)), S_is = sqrt(8·G12·G_IIc/(π·t));
- thin outer ply: Yt_is = 1.79·sqrt(G_Ic/(π·t·Λ22⁰)), S_is = sqrt(4·G12·G_IIc/(π·t)) (from memory).

An embedded ply takes the larger of its thick and thin values (a ply is "thick" once the thin-ply value falls
below the thick-ply one); an outer ply the larger of its thin-outer value and the unidirectional strength.
Consecutive plies of the same material and angle act as one ply of their summed thickness (common practice).
A ply is outer when its cluster touches the bottom or top face of the laminate or a core (a core gives no
constraint worth counting: conservative). Without G_Ic and G_IIc only the thick-ply values are known: embedded
plies get them (a lower bound of the in-situ strength) and outer plies the unidirectional strengths.
"""

from __future__ import annotations

import math

from .laminate import Ply
from .materials import is_core
from .ply_defaults import THICK_SHEAR, THICK_TENSION

#: Edge-crack factor of a thin outer ply's transverse tensile in-situ strength (Camanho et al. 2006).
OUTER_TENSION = 1.79


def clusters(plies: tuple[Ply, ...]) -> list[tuple[int, int]]:
    """(first index, count) of each run of consecutive plies with the same material and angle."""
    out: list[tuple[int, int]] = []
    for k, ply in enumerate(plies):
        if out and plies[out[-1][0]].material is ply.material and plies[out[-1][0]].angle == ply.angle:
            out[-1] = (out[-1][0], out[-1][1] + 1)
        else:
            out.append((k, 1))
    return out


def insitu_strengths(plies: tuple[Ply, ...]) -> dict[int, tuple[float, float]]:
    """Ply index → (Yt_is, S12_is) of every ply whose material asks for in-situ strengths (``insitu = true``).

    Plies listed bottom to top; strengths in the ply material's units. Plies without Yt or S12 are left out.
    """
    out: dict[int, tuple[float, float]] = {}
    n = len(plies)
    for first, count in clusters(plies):
        m = plies[first].material
        if m.kind != "ply" or not m.insitu or m.Yt is None or m.S12 is None:
            continue
        before, after = first - 1, first + count
        outer = (before < 0 or is_core(plies[before].material) or after >= n or is_core(plies[after].material))
        t = sum(p.thickness for p in plies[first:first + count])
        yt, s = thin_ply_strengths(m, t, outer)
        if outer:
            value = (max(m.Yt, yt), max(m.S12, s))
        else:
            value = (max(THICK_TENSION * m.Yt, yt), max(THICK_SHEAR * m.S12, s))
        for k in range(first, first + count):
            out[k] = value
    return out


def thin_ply_strengths(m, t: float, outer: bool) -> tuple[float, float]:
    """(Yt_is, S12_is) of a thin embedded or outer ply of thickness ``t``; (0, 0) without the toughnesses."""
    if m.G_Ic is None or m.G_IIc is None:
        return 0.0, 0.0
    lam22 = 2.0 * (1.0 / m.E2 - m.nu21 ** 2 / m.E1)
    if outer:
        return (OUTER_TENSION * math.sqrt(m.G_Ic / (math.pi * t * lam22)),
                math.sqrt(4.0 * m.G12 * m.G_IIc / (math.pi * t)))
    return math.sqrt(8.0 * m.G_Ic / (math.pi * t * lam22)), math.sqrt(8.0 * m.G12 * m.G_IIc / (math.pi * t))
