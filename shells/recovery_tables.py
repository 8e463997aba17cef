"""Flat tables of sections and plies, the form in which the recovery kernels read them.

Sections of different ply counts are concatenated: section ``s`` owns ply rows
``first[s] … first[s] + nply[s] − 1``, bottom to top. All arrays are float64 or
int64 and C-contiguous, ready for numba.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from . import params as P
from .recovery_args import SectionArrays
from .section import Section

#: Relative size below which a part of a state is round-off and taken as exactly zero: ply-point z within
#: ROUNDOFF·h of the reference surface, transverse shear per unit Q within ROUNDOFF of the section's largest
#: (free faces), and in the kernels each mid-plane strain or curvature component within ROUNDOFF of the largest
#: strain it produces through the section (docs/criteria.md, "Round-off").
ROUNDOFF = 1e-12


def _without_roundoff(sec: Section) -> tuple[np.ndarray, np.ndarray]:
    """z (nply, 3) and F (nply, 3, 2, 2) of a section with round-off values set to exactly zero (copies)."""
    zb, zt = sec.props.z[:-1], sec.props.z[1:]
    z = np.stack([zb, (zb + zt) / 2.0, zt], axis=1)
    z[np.abs(z) <= ROUNDOFF * sec.props.thickness] = 0.0
    F = np.array(sec.shear_F, dtype=np.float64)
    for j in range(2):                         # per load state: unit Qx, unit Qy
        col = F[..., j]
        col[np.abs(col) <= ROUNDOFF * np.abs(col).max()] = 0.0
    return z, F


@dataclass(frozen=True)
class SectionTables:
    """Kernel view of a set of sections: the arrays and the section names.

    The arrays (``compliance``, ``fixed``, ``first``, ``nply``, ``z``, ``Q``, ``cs``,
    ``alpha``, ``beta``, ``F``, ``params`` and the face tables) are those of
    :class:`shells.recovery_args.SectionArrays`, read here as attributes.
    """

    arrays: SectionArrays
    names: tuple[str, ...] = field(default=())
    #: Share of each row in the stiffness of its ply (1; ½ for each fibre direction of a wound ±angle ply);
    #: None: every row its own ply.
    share: np.ndarray | None = None

    def __getattr__(self, name: str):
        if name in SectionArrays._fields:
            return getattr(self.arrays, name)
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")

    @property
    def max_plies(self) -> int:
        return int(self.nply.max())


def build_tables(sections: Sequence[Section], names: Sequence[str] = (),
                 environment: str | None = None) -> SectionTables:
    """Flatten sections (in the order given: section ids are positions in this list).

    ``environment`` chooses the knockdown of the allowables (:meth:`shells.section.Section.params_for`).
    """
    comp, fixed, first, nply, shares = [], [], [], [], []
    face_first, face_count, face_rows = [], [], []
    rows: dict[str, list] = {k: [] for k in ("z", "Q", "cs", "alpha", "beta", "F")}
    row = 0
    for sec in sections:
        sp = sec.props
        comp.append(np.linalg.inv(sp.ABD))
        fixed.append(np.stack([sp.NT, sp.MT, sp.NH, sp.MH]))
        first.append(row)
        nply.append(sec.n_rows)
        layer = np.array([k for k, _ in sec.rows], dtype=np.int64)
        start = {k: r for r, k in reversed(list(enumerate(layer)))}      # first row of each ply
        face_first.append(len(face_rows))
        face_count.append(len(sec.faces))
        face_rows.extend([row + start[run[0]], int(np.isin(layer, run).sum())] for run in sec.faces)
        row += sec.n_rows
        z, F = _without_roundoff(sec)
        rows["z"].append(z[layer])
        for k, angle in sec.rows:
            ply = sec.laminate.plies[k]
            Q = ply.material.Q()
            rows["Q"].append([Q[0, 0], Q[0, 1], Q[1, 1], Q[2, 2]])
            t = np.radians(angle)
            rows["cs"].append([np.cos(t), np.sin(t)])
            rows["alpha"].append(ply.material.alpha()[:2])
            rows["beta"].append(ply.material.beta()[:2])
            shares.append(0.5 if ply.wound else 1.0)
        rows["F"].append(F[layer])

    def arr(x, dtype=np.float64):
        return np.ascontiguousarray(np.asarray(x, dtype=dtype))

    params, face_params = environment_params(sections, environment)

    return SectionTables(SectionArrays(
        compliance=arr(comp), fixed=arr(fixed), first=arr(first, np.int64), nply=arr(nply, np.int64),
        z=arr(np.concatenate(rows["z"])), Q=arr(rows["Q"]), cs=arr(rows["cs"]), alpha=arr(rows["alpha"]),
        beta=arr(rows["beta"]), F=arr(np.concatenate(rows["F"])),
        params=params, face_first=arr(face_first, np.int64),
        face_count=arr(face_count, np.int64), face_rows=arr(np.reshape(face_rows, (-1, 2)), np.int64),
        face_params=face_params,
    ), tuple(names), None if all(x == 1.0 for x in shares) else arr(shares))


def environment_params(sections: Sequence[Section], environment: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """``params`` (nrows, NPARAM) and ``face_params`` (nface, NPARAM) of the tables of ``sections`` with the
    allowables knocked down for ``environment`` (:meth:`shells.section.Section.params_for`)."""
    ply, face = [np.zeros((0, P.NPARAM))], [np.zeros((0, P.NPARAM))]
    for sec in sections:
        p, f = sec.params_for(environment)
        ply.append(p[[k for k, _ in sec.rows]])
        face.append(f)
    return (np.ascontiguousarray(np.concatenate(ply), dtype=np.float64),
            np.ascontiguousarray(np.concatenate(face), dtype=np.float64))
