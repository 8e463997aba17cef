"""What a run computes beyond the first-ply envelope, per block: the misalignment turns, the progressive failure
factors and the restricted envelopes, with the store datasets they fill (docs/results.md).

:class:`Beyond` is built once per run from the definition and the case plan (:func:`beyond_of`), travels with
the block context to every task, and names the extra block datasets of the store (:meth:`Beyond.datasets`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bridge.results.store import BlockDataset

#: Per-cell fields of a restricted envelope, with their number types and code names.
RESTRICTED_FIELDS = (("min_margin", "f8", ""), ("critical_ply", "i4", ""), ("strength_ratio", "f8", ""),
                     ("case", "i4", "case"), ("point", "i1", "point"), ("criterion", "i1", "criterion"),
                     ("mode", "i1", "mode"))


@dataclass(frozen=True)
class RestrictedPlan:
    """A restricted envelope of a run: criteria by name, modes kept, and the cases it covers."""

    name: str
    criteria: tuple[str, ...]
    modes: tuple[str, ...]
    keep_case: np.ndarray        # bool (ncase,)


@dataclass(frozen=True)
class Beyond:
    """The analyses of a run beyond the first-ply envelope.

    Attributes
    ----------
    rotations : tuple of float
        Laminate turns checked (degrees, nominal first): ``(0,)``, or ``(0, −δ, +δ)`` with a misalignment δ.
    progressive : tuple of str
        Criteria of the ply discount (empty: no progressive analysis).
    retained : (float, float)
        Fractions of the moduli kept after a matrix and a fibre failure.
    restricted : tuple of RestrictedPlan
    n_cases : int
    """

    rotations: tuple[float, ...] = (0.0,)
    progressive: tuple[str, ...] = ()
    retained: tuple[float, float] = (0.0, 0.0)
    restricted: tuple[RestrictedPlan, ...] = ()
    n_cases: int = 0

    @property
    def misaligned(self) -> bool:
        return len(self.rotations) > 1

    def datasets(self, max_plies: int) -> tuple[BlockDataset, ...]:
        """The extra block datasets of the store, in checksum order."""
        out = []
        if self.misaligned:
            out += [BlockDataset("envelope/misalignment", (max_plies,)), BlockDataset("cells/misalignment")]
        if self.progressive:
            out += [BlockDataset("cells/first_ply_factor", (self.n_cases,)),
                    BlockDataset("cells/last_ply_factor", (self.n_cases,))]
        for r in self.restricted:
            out += [BlockDataset(f"envelopes/{r.name}/{key}", (), dtype, names) for key, dtype, names in
                    RESTRICTED_FIELDS]
        return tuple(out)

    def compute(self, tables, section, phi, R, dT, dM, pres, fos, held, held_pressure, shear, held_shear,
                shear_of, case_params) -> dict[str, np.ndarray]:
        """The extra arrays of one block by store path (progressive factors, restricted envelopes)."""
        from postproc.progressive import progressive_cells, restricted_cells
        from shells.criteria import by_name

        out = {}
        if self.progressive:
            first, last, _ = progressive_cells(tuple(by_name(n) for n in self.progressive), tables, section, phi, R,
                                               dT, dM, held, self.retained, case_params, self.rotations)
            out["cells/first_ply_factor"], out["cells/last_ply_factor"] = first, last
        for r in self.restricted:
            cells = restricted_cells(tuple(by_name(n) for n in r.criteria), r.modes, r.keep_case, tables, section,
                                     phi, R, dT, dM, pres, fos, shear, held, held_pressure, held_shear,
                                     case_params, self.rotations, shear_of)
            out.update({f"envelopes/{r.name}/{key}": cells[key] for key, _, _ in RESTRICTED_FIELDS})
        return out


def beyond_of(defn, plan) -> Beyond:
    """The :class:`Beyond` settings of a run (definition's ``[analysis]``, cases of ``plan``)."""
    from shells.errors import DefinitionError

    a = defn.analysis
    for e in a.envelopes:
        for name in e.cases:
            if name not in plan.names:
                raise DefinitionError(f"analysis.envelopes.{e.name}.cases: no case '{name}' in this run; cases: "
                                      f"{', '.join(plan.names[:20])}", defn.source)
    d = float(a.misalignment)
    prog = a.progressive
    restricted = tuple(RestrictedPlan(e.name, e.criteria, e.modes, np.array([e.keeps(c) for c in plan.cases]))
                       for e in a.envelopes)
    return Beyond((0.0, -d, d) if d > 0 else (0.0,), prog.criteria if prog else (),
                  (prog.matrix_retained, prog.fibre_retained) if prog else (0.0, 0.0), restricted,
                  len(plan.cases))


def split_extra(envelope: dict, cells: dict) -> dict[str, np.ndarray]:
    """Move the misalignment arrays of a block's envelope and cells into the extra datasets (by path)."""
    out = {}
    if "misalignment" in envelope:
        out["envelope/misalignment"] = envelope.pop("misalignment")
        out["cells/misalignment"] = cells.pop("misalignment")
    return out


def check_progressive(defn, model) -> None:
    """Refuse a progressive analysis over a ply material without Xt and Xc (the fibre check after a matrix
    failure needs them)."""
    from shells import params as P
    from shells.errors import MaterialError

    if defn.analysis.progressive is None:
        return
    for sec in model.sections:
        for ply in sec.laminate.plies:
            m = ply.material
            if ply.material.params()[P.KIND] == P.KIND_PLY and (getattr(m, "Xt", None) is None or getattr(m, "Xc", None) is None):
                raise MaterialError(f"[analysis.progressive]: material '{m.name}' lacks Xt or Xc, which the fibre "
                                    f"check after a matrix failure needs; add them to [materials.{m.name}]",
                                    defn.source)
