"""The point state every criterion reads, the shared mode names and the failure index.

A point state is a float64 vector of six stresses in MATERIAL axes, order
``(σ1, σ2, τ12, τ13, τ23, σ3)`` (tension positive, force/length²). Every
evaluation gets two states: ``sm``, the mechanical part, which scales with the
load factor R, and ``sf``, the fixed part (thermal residual stress and held
cases), which is held. The strength ratio is the smallest R ≥ 0 with
``criterion(sf + R·sm) = 1`` (see ``docs/conventions.md``):

- no mechanical stress, or a load direction that never fails: ``sr = +inf``,
  ``mode = -1``;
- the fixed part alone already fails: ``sr = 0`` with its mode (this wins over
  the previous rule);
- criterion not applicable to the ply (its kind is not in ``requires``, or an
  optional allowable is NaN): ``sr = +inf``, ``mode = -1``.
"""

from __future__ import annotations

import numpy as np

S1, S2, T12, T13, T23, S3 = range(6)
NSTATE = 6
NPOINT = 3
INF = np.inf

#: Modes shared by the in-plane ply criteria (max stress, max strain, Tsai-Hill, Tsai-Wu, Hoffman).
PLY_MODES = ("fibre tension", "fibre compression", "matrix tension", "matrix compression", "in-plane shear")
FT, FC, MT, MC, SH = range(5)

#: Modes of an isotropic layer (no fibre or matrix): principal stresses and shear.
ISOTROPIC_MODES = ("tension", "compression", "shear")


def failure_index(sr):
    """Failure index 1/R of strength ratios ``sr`` (project-wide definition).

    ``sr = 0`` gives ``inf``, ``sr = inf`` gives 0 and NaN stays NaN. Works on
    scalars and arrays and never modifies its argument.
    """
    with np.errstate(divide="ignore"):
        return np.divide(1.0, np.asarray(sr, dtype=np.float64))
