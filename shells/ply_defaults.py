"""Defaults an analyst would accept for a ply material, each with its source, and the notes that say so.

Strain limits default to strength / modulus, Puck's inclination parameters to the values of the fibre family,
Hashin's transverse shear strength to the fracture-plane value, and the in-situ strengths of thick embedded
plies have fixed factors. :func:`defaults_used` words what a material relies on, per criterion, for the run
summary.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

#: In-situ strength factors of a thick embedded ply, Yt_is = 1.12·√2·Yt and S12_is = √2·S12 (linear shear
#: response; Camanho et al., Composites Part A 37 (2006) 165–176).
THICK_TENSION = 1.12 * math.sqrt(2.0)
THICK_SHEAR = math.sqrt(2.0)

#: Puck's inclination parameters (p⊥∥⁺, p⊥∥⁻) by fibre family (Puck, Kopp & Knops, Compos. Sci. Tech. 62
#: (2002) 371–378, recommended values; from memory). No family given: the glass values (noted in the run).
PUCK_INCLINATIONS = {"carbon": (0.35, 0.30), "glass": (0.30, 0.25)}
PUCK_DEFAULT_FIBRE = "glass"


@dataclass(frozen=True)
class StrainLimits:
    """Strain limits of a ply in its material axes (magnitudes; shear engineering, γ12).

    Each one not given defaults to the matching strength over the modulus (common practice for a linear
    lamina): fibre Xt/E1 and Xc/E1, matrix Yt/E2 and Yc/E2, shear S12/G12.
    """

    fibre_tension: float | None = None
    fibre_compression: float | None = None
    matrix_tension: float | None = None
    matrix_compression: float | None = None
    shear: float | None = None


#: StrainLimits field → (strength, modulus) of its default.
STRAIN_DEFAULTS = {"fibre_tension": ("Xt", "E1"), "fibre_compression": ("Xc", "E1"),
                   "matrix_tension": ("Yt", "E2"), "matrix_compression": ("Yc", "E2"), "shear": ("S12", "G12")}


def strain_limit_values(ply) -> tuple[dict[str, float | None], tuple[str, ...]]:
    """The strain limits of an orthotropic ply in use (given, else strength / modulus) and the derived names."""
    values, derived = {}, []
    for name, (strength, modulus) in STRAIN_DEFAULTS.items():
        given = getattr(ply.strain_limits, name)
        if given is None and getattr(ply, strength) is not None:
            values[name] = getattr(ply, strength) / getattr(ply, modulus)
            derived.append(name)
        else:
            values[name] = given
    return values, tuple(derived)


def puck_inclinations(ply) -> tuple[float, float]:
    """(p⊥∥⁺, p⊥∥⁻) of a ply: as given, else by its fibre family, else the glass values."""
    base = PUCK_INCLINATIONS[ply.fibre or PUCK_DEFAULT_FIBRE]
    return (base[0] if ply.p_tpl is None else ply.p_tpl, base[1] if ply.p_cpl is None else ply.p_cpl)


def fracture_plane_shear_strength(Yc: float | None, alpha0_deg: float) -> float | None:
    """S_T = Yc·cos α0·(sin α0 + cos α0 / tan 2α0); None without Yc.

    The transverse shear strength on the plane of fracture under pure transverse compression (Dávila, Camanho
    & Rose, J. Composite Materials 39 (2005) 323–345); about 0.377·Yc at the usual α0 = 53°.
    """
    if Yc is None:
        return None
    a = math.radians(alpha0_deg)
    return Yc * math.cos(a) * (math.sin(a) + math.cos(a) / math.tan(2.0 * a))


def _g(value: float) -> str:
    """Four significant figures without an exponent where a reader expects none (13440, 92.74, 0.0083)."""
    return f"{float(f'{value:.4g}'):g}" if 1e-4 <= abs(value) < 1e6 else f"{value:.4g}"


def defaults_used(ply, stress_unit: str = "") -> dict[str, str]:
    """Criterion name → a one-line note on each default an orthotropic ply relies on for that criterion;
    ``stress_unit`` (e.g. ``MPa``) labels the stresses of the notes."""
    notes = {}
    values, derived = strain_limit_values(ply)
    if derived:
        notes["max-strain"] = ("strain limits " + ", ".join(
            f"{n} = {_g(values[n])} ({'/'.join(STRAIN_DEFAULTS[n])})" for n in derived)
            + " derived as strength / modulus (common practice)")
    if ply.p_tpl is None or ply.p_cpl is None:
        pt, pc = puck_inclinations(ply)
        family = ply.fibre or f"{PUCK_DEFAULT_FIBRE} (no fibre given)"
        notes["puck"] = f"inclinations p_tpl = {pt:g}, p_cpl = {pc:g} of {family} fibre (Puck, Kopp & Knops 2002)"
    if ply.S23 is None and ply.Yc is not None:
        st = fracture_plane_shear_strength(ply.Yc, ply.alpha0_deg)
        unit = f" {stress_unit}" if stress_unit else ""
        notes["hashin"] = (f"transverse shear strength S_T = {_g(st)}{unit} from the fracture plane at alpha0 = "
                           f"{ply.alpha0_deg:g}° (Davila, Camanho & Rose 2005)")
    if ply.insitu and (ply.G_Ic is None or ply.G_IIc is None):
        notes["larc03"] = ("in-situ strengths without G_Ic, G_IIc: thick-ply values on embedded plies, the "
                           "unidirectional strengths on outer plies (conservative)")
    return notes


def notes_for(materials, criteria: set[str] | frozenset[str], stress_unit: str = "") -> dict[str, dict[str, str]]:
    """Material name → {criterion: note} of the defaults the chosen criteria rely on (materials without any left out).

    Parameters
    ----------
    materials : iterable of material dataclasses
        The materials a run uses (each once).
    criteria : set of str
        Names of the chosen criteria.
    stress_unit : str
        Label of the run's stress unit, shown with the stresses of the notes.
    """
    out = {}
    for m in materials:
        used = {c: text for c, text in m.defaults_used(stress_unit).items() if c in criteria} \
            if hasattr(m, "defaults_used") else {}
        if used:
            out[m.name] = used
    return out
