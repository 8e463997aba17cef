"""Layout of the per-ply property vector read by the numba kernels.

Every ply of every section is described to the compiled kernels by one
float64 vector of length :data:`NPARAM`. The index constants below are plain
module-level integers so numba freezes them at compile time. A property that a
material does not define is NaN; a criterion that needs it is refused before
any kernel runs (see :func:`shells.criteria.check_requirements`).

Units are those of the definition's unit system (stress in force/length²).
"""

from __future__ import annotations

NAMES = (
    "kind",      # 0 ply (orthotropic lamina), 1 isotropic layer, 2 core
    "E1", "E2", "G12", "nu12", "G13", "G23", "Ez",
    "Xt", "Xc", "Yt", "Yc", "S12", "S13", "S23", "Zc",
    # strain limits (magnitudes; shear engineering): definition table strain_limits = {fibre_tension = …}
    "strain_fibre_tension", "strain_fibre_compression", "strain_matrix_tension", "strain_matrix_compression",
    "strain_shear",
    "yield_strength",
    "core_S13", "core_S23",
    "F12star",
    "p_tpl", "p_cpl",          # Puck inclination parameters p⊥∥(+), p⊥∥(−)
    "alpha0",                  # LaRC03 fracture angle of pure transverse compression, rad
    "YT_is", "S12_is",         # in-situ strengths (LaRC03 option); equal to Yt, S12 when off
    "wrinkling", "dimpling",   # sandwich face allowables (compressive stress), set per ply
    "ilss",                    # interlaminar shear strength at this ply's faces
    "S_T",                     # transverse shear strength of Hashin's matrix modes: S23, else the fracture-plane value
    "Zt",                      # flatwise (through-thickness) tensile strength of a core
)

KIND, E1, E2, G12, NU12, G13, G23, EZ, XT, XC, YT, YC, S12, S13, S23, ZC, \
    STRAIN_FT, STRAIN_FC, STRAIN_MT, STRAIN_MC, STRAIN_SH, YIELD, CORE_S13, CORE_S23, F12STAR, P_TPL, \
    P_CPL, ALPHA0, YT_IS, S12_IS, WRINKLING, DIMPLING, ILSS, S_T, ZT = range(len(NAMES))

NPARAM = len(NAMES)

#: The allowables: strengths, strain limits and the face, core and interlaminar allowables. A material's
#: knockdown multiplies these (and nothing else: moduli, Poisson ratios and criterion parameters stay).
ALLOWABLES = (XT, XC, YT, YC, S12, S13, S23, ZC, STRAIN_FT, STRAIN_FC, STRAIN_MT, STRAIN_MC, STRAIN_SH, YIELD,
              CORE_S13, CORE_S23, YT_IS, S12_IS, WRINKLING, DIMPLING, ILSS, S_T, ZT)
INDEX = {name: i for i, name in enumerate(NAMES)}

KIND_PLY, KIND_ISOTROPIC, KIND_CORE = 0, 1, 2
KIND_NAMES = ("ply", "isotropic", "core")


def knocked_down(params, knockdown):
    """Property vectors with every allowable multiplied by the knockdown (a copy).

    Parameters
    ----------
    params : float64 (..., NPARAM)
        Property vectors (NaN where undefined: stays NaN).
    knockdown : float or float64 (...)
        Fraction of strength retained, one per vector (environment × damage × other factors).
    """
    import numpy as np

    out = np.array(params, dtype=np.float64)
    k = np.asarray(knockdown, dtype=np.float64)
    out[..., list(ALLOWABLES)] *= k[..., None]
    return out
