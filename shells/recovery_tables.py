"""Flat tables of sections and plies, the form in which the recovery kernels read them.

Sections of different ply counts are concatenated: section ``s`` owns ply rows
``first[s] … first[s] + nply[s] − 1``, bottom to top. All arrays are float64 or
int64 and C-contiguous, ready for numba.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from .recovery_args import SectionArrays
from .section import Section


@dataclass(frozen=True)
class SectionTables:
    """Kernel view of a set of sections.

    Attributes
    ----------
    compliance : (nsec, 6, 6)
        [[A, B], [B, D]]⁻¹ in laminate axes.
    fixed : (nsec, 4, 3)
        N_T, M_T (per unit temperature rise), N_H, M_H (per unit moisture change).
    first, nply : (nsec,) int64
        First ply row and ply count of each section.
    z : (nrows, 3)
        z of the bottom, middle and top of every ply (length, reference surface z = 0).
    Q : (nrows, 4)
        Q11, Q12, Q22, Q66 in material axes.
    cs : (nrows, 2)
        cos θ, sin θ of the ply angle.
    alpha, beta : (nrows, 2)
        Expansion along 1 and 2 per unit temperature / moisture.
    F : (nrows, 3, 2, 2)
        Transverse shear per unit (Qx, Qy) at the three points, laminate axes.
    params : (nrows, NPARAM)
        Criterion property vectors.
    knockdown : (nrows,)
        Fraction of strength retained, per ply.
    """

    compliance: np.ndarray
    fixed: np.ndarray
    first: np.ndarray
    nply: np.ndarray
    z: np.ndarray
    Q: np.ndarray
    cs: np.ndarray
    alpha: np.ndarray
    beta: np.ndarray
    F: np.ndarray
    params: np.ndarray
    knockdown: np.ndarray
    names: tuple[str, ...] = field(default=())

    @property
    def max_plies(self) -> int:
        return int(self.nply.max())

    def arrays(self) -> SectionArrays:
        """The kernel's view (:class:`shells.recovery_args.SectionArrays`), sharing these arrays."""
        return SectionArrays(*(getattr(self, name) for name in SectionArrays._fields))


def build_tables(sections: Sequence[Section], names: Sequence[str] = ()) -> SectionTables:
    """Flatten sections (in the order given: section ids are positions in this list)."""
    comp, fixed, first, nply = [], [], [], []
    rows: dict[str, list] = {k: [] for k in ("z", "Q", "cs", "alpha", "beta", "F", "params", "knockdown")}
    row = 0
    for sec in sections:
        sp = sec.props
        comp.append(np.linalg.inv(sp.ABD))
        fixed.append(np.stack([sp.NT, sp.MT, sp.NH, sp.MH]))
        first.append(row)
        nply.append(sec.n_plies)
        row += sec.n_plies
        zb, zt = sp.z[:-1], sp.z[1:]
        rows["z"].append(np.stack([zb, (zb + zt) / 2.0, zt], axis=1))
        for ply in sec.laminate.plies:
            Q = ply.material.Q()
            rows["Q"].append([Q[0, 0], Q[0, 1], Q[1, 1], Q[2, 2]])
            t = np.radians(ply.angle)
            rows["cs"].append([np.cos(t), np.sin(t)])
            rows["alpha"].append(ply.material.alpha()[:2])
            rows["beta"].append(ply.material.beta()[:2])
            rows["knockdown"].append(ply.material.knockdown)
        rows["F"].append(sec.shear_F)
        rows["params"].append(sec.ply_params)

    def arr(x, dtype=np.float64):
        return np.ascontiguousarray(np.asarray(x, dtype=dtype))

    return SectionTables(
        compliance=arr(comp), fixed=arr(fixed), first=arr(first, np.int64), nply=arr(nply, np.int64),
        z=arr(np.concatenate(rows["z"])), Q=arr(rows["Q"]), cs=arr(rows["cs"]), alpha=arr(rows["alpha"]),
        beta=arr(rows["beta"]), F=arr(np.concatenate(rows["F"])), params=arr(np.concatenate(rows["params"])),
        knockdown=arr(rows["knockdown"]), names=tuple(names),
    )
