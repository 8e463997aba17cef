"""The run's metadata as typed, frozen dataclasses: what ``recover`` writes and every reader of a store reads.

One :class:`RunMeta` describes a recovery run: provenance, units and their labels,
the analysis settings, materials (with their properties as written, units, source
and knockdown breakdown), sections (plies, layup as written), zones, cases and
combinations (with their factors), the criteria, and the run summary. It is plain
data: :func:`meta_to_json` and :func:`meta_from_json` turn it into JSON text and
back (the results store keeps that text in one dataset, docs/results.md).

Extending the contract: add a field **with a default** to the dataclass concerned
(any of the types used here: str, int, float, bool, None, tuples of them or of
these dataclasses, ``dict[str, ...]``). Readers of older documents get the default;
nothing else changes. Document the field in docs/results.md.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping, Union

#: Version of the metadata document (bumped with the store's layout version when a field changes meaning).
META_VERSION = 1


@dataclass(frozen=True)
class Named:
    """A name with a number: a factor of a combination, a knockdown factor, an engineering constant."""

    name: str
    value: float


@dataclass(frozen=True)
class InputFile:
    """One input of the run: its role, the path as given and as resolved, and SHA-256 digests."""

    role: str
    path: str
    sha256: str
    resolved: str = ""
    data_sha256: tuple[str, ...] = ()


@dataclass(frozen=True)
class Provenance:
    tool: str
    tool_version: str
    created: str
    inputs: tuple[InputFile, ...] = ()

    def input(self, role: str) -> InputFile | None:
        return next((i for i in self.inputs if i.role == role), None)


@dataclass(frozen=True)
class Property:
    """One material property as the definition names it (``key``), in the run's units; ``kind`` names the unit."""

    key: str
    value: Union[float, bool, str]
    kind: str


@dataclass(frozen=True)
class MaterialInfo:
    name: str
    kind: str
    properties: tuple[Property, ...] = ()
    knockdown: float = 1.0
    knockdown_factors: tuple[Named, ...] = ()
    source: str | None = None
    description: str | None = None
    #: The environment factor by environment name when given as a table (``knockdown`` then uses the smallest).
    environment_factors: tuple[Named, ...] = ()


@dataclass(frozen=True)
class PlyInfo:
    """One ply of a stored section (ply 1 at the bottom).

    Attributes
    ----------
    material : str
    angle : float
        Degrees from the laminate's x axis, counter-clockwise about the normal.
    thickness : float
        Length unit of the run.
    wound : int
        +1 and −1 for the +angle and −angle fibres of a wound ±angle ply (two recovered plies that share the
        ply's place and thickness, listed one after the other), 0 for any other ply.
    """

    material: str
    angle: float
    thickness: float
    wound: int = 0


@dataclass(frozen=True)
class SectionInfo:
    """A section (laminate with an offset), laminate axes. Stiffness matrices are datasets of the store.

    ``membrane`` and ``flexural`` are the restrained engineering constants about the mid-plane (A⁻¹, D_mid⁻¹),
    ``membrane_free`` and ``flexural_free`` those of the full mid-plane ABD inverse (docs/fields.md).
    """

    id: int
    name: str
    laminate: str
    plies: tuple[PlyInfo, ...]
    thickness: float
    offset: float = 0.0
    areal_mass: float = 0.0
    layup: str | None = None
    shear_method: str = ""
    membrane: tuple[Named, ...] = ()
    flexural: tuple[Named, ...] = ()
    flags: tuple[str, ...] = ()
    membrane_free: tuple[Named, ...] = ()
    flexural_free: tuple[Named, ...] = ()

    @property
    def interfaces(self) -> tuple[float, ...]:
        """z of the ply interfaces, bottom to top (reference surface at 0); the two fibre directions of a wound
        ply share one ply."""
        z = [self.offset - self.thickness / 2.0]
        for p in self.plies:
            if p.wound >= 0:
                z.append(z[-1] + p.thickness)
        return tuple(z)

    def ply_z(self) -> tuple[tuple[float, float], ...]:
        """(bottom, top) z of every recovered ply (the order of ``plies`` and of the results' ply axis)."""
        out, z = [], self.offset - self.thickness / 2.0
        for p in self.plies:
            if p.wound < 0:
                out.append(out[-1])
                continue
            out.append((z, z + p.thickness))
            z += p.thickness
        return tuple(out)


@dataclass(frozen=True)
class ZoneInfo:
    name: str
    laminate: str
    section: int = -1
    cells: int = 0


@dataclass(frozen=True)
class CaseInfo:
    """A case of the run; ``steps`` builds it from the input steps, ``combination`` is the sum as written.

    ``held`` names the held cases in it (``held = true``: their resultants are part of the fixed state, not
    scaled by the strength ratio) and ``held_steps`` builds that held part from the input steps.
    ``environment`` is the environment its allowables are knocked down for (None: each material's default),
    ``knockdowns`` the knockdown of every material in it; ``moisture_field`` and ``pressure_field`` name per-cell
    arrays of the mesh that replace ``delta_M`` and ``pressure``.
    """

    name: str
    kind: str = "limit"
    delta_T: float = 0.0
    delta_M: float = 0.0
    pressure: float = 0.0
    factor_of_safety: float = 1.0
    temperature_field: str | None = None
    steps: tuple[Named, ...] = ()
    combination: tuple[Named, ...] = ()
    held: tuple[str, ...] = ()
    held_steps: tuple[Named, ...] = ()
    environment: str | None = None
    knockdowns: tuple[Named, ...] = ()
    moisture_field: str | None = None
    pressure_field: str | None = None


@dataclass(frozen=True)
class DefaultUsed:
    """A default a chosen criterion relied on for a material.

    Attributes
    ----------
    material, criterion : str
    note : str
        What was taken and from where (a derived strain limit, Puck's inclinations, Hashin's S_T, ...).
    """

    material: str
    criterion: str
    note: str


@dataclass(frozen=True)
class ProgressiveInfo:
    """The ply-discount settings of a run (docs/criteria.md): fractions of the moduli kept after a matrix and a
    fibre failure, and the criteria that find the failures."""

    matrix_retained: float
    fibre_retained: float
    criteria: tuple[str, ...] = ()


@dataclass(frozen=True)
class EnvelopeInfo:
    """A restricted envelope as declared: the criteria, modes (names or families), case kinds and cases kept."""

    name: str
    criteria: tuple[str, ...]
    modes: tuple[str, ...] = ()
    kinds: tuple[str, ...] = ()
    cases: tuple[str, ...] = ()
    description: str = ""


@dataclass(frozen=True)
class AnalysisInfo:
    criteria: tuple[str, ...]
    factor_of_safety: tuple[Named, ...]
    transverse_shear: str
    shear_factor: float
    wrinkling_coefficient: float
    hot_spots: int
    check_ranges: bool = True
    defaults: tuple[DefaultUsed, ...] = ()
    progressive: ProgressiveInfo | None = None
    #: Misalignment tolerance δ (degrees): each cell was also checked with its laminate turned by ±δ (0: off).
    misalignment: float = 0.0
    envelopes: tuple[EnvelopeInfo, ...] = ()


@dataclass(frozen=True)
class CriterionInfo:
    """A registered criterion: its name (its code is its position) and its mode names."""

    name: str
    modes: tuple[str, ...]


@dataclass(frozen=True)
class HotSpot:
    """A cell at its governing state (ply numbers 1-based, cells 0-based)."""

    cell: int
    min_margin: float
    ply: int
    strength_ratio: float
    case: str
    point: str
    criterion: str
    mode: str


@dataclass(frozen=True)
class Minimum:
    """The lowest margin over a group (zone, laminate, case, criterion) and the cell where it occurs."""

    name: str
    min_margin: float | None
    cell: int
    laminate: str = ""


@dataclass(frozen=True)
class ShearCheck:
    """Transverse shear from the moment field: how far the input Q is from the fitted field's Q in one zone.

    ``mean`` Σ|Q_field − Q_input| / Σ|Q_input|, ``max`` max|Q_field − Q_input| / max|Q_input| (None without Q);
    ``fallback_cells`` used the Q-only method.
    """

    zone: str
    mean: float | None
    max: float | None
    fallback_cells: int = 0


@dataclass(frozen=True)
class ProgressiveZone:
    """Progressive failure over one zone: the lowest first-ply and last-ply factors over its cells and cases (and
    their cells), and the range of the ratio last/first over its cell-cases where both are finite."""

    zone: str
    first: float | None
    first_cell: int
    last: float | None
    last_cell: int
    ratio_min: float | None = None
    ratio_max: float | None = None


@dataclass(frozen=True)
class RestrictedSummary:
    """A restricted envelope's worst cell and its lowest margin per zone."""

    name: str
    worst: HotSpot | None = None
    zones: tuple[Minimum, ...] = ()


@dataclass(frozen=True)
class RunSummary:
    worst: HotSpot | None = None
    hot_spots: tuple[HotSpot, ...] = ()
    zones: tuple[Minimum, ...] = ()
    laminates: tuple[Minimum, ...] = ()
    cases: tuple[Minimum, ...] = ()
    criteria: tuple[Minimum, ...] = ()
    flagged_cells: int = 0
    flagged_examples: tuple[int, ...] = ()
    notes: tuple[str, ...] = ()   # what the run assumed or found unusual, and about the mesh
    shear_check: tuple[ShearCheck, ...] = ()
    cell_order: str = ""   # "checked" (the file's own cells matched to the mesh) or "assumed" (HDF5)
    progressive: tuple[ProgressiveZone, ...] = ()
    envelopes: tuple[RestrictedSummary, ...] = ()
    #: With a misalignment tolerance: cells whose worst margin comes from a turned laminate.
    misaligned_cells: int = 0

    @classmethod
    def from_result(cls, result: Mapping[str, Any]) -> "RunSummary":
        """From :meth:`postproc.summary.SummaryAccumulator.result` (name-keyed groups become tuples)."""
        def groups(key: str) -> tuple[Minimum, ...]:
            return tuple(Minimum(name, v.get("min_margin"), int(v.get("cell", -1)), v.get("laminate", ""))
                         for name, v in result.get(key, {}).items())

        hot = tuple(HotSpot(**h) for h in result.get("hot_spots", ()))
        worst = result.get("worst")
        shear = result.get("transverse_shear", {}).get("zones", {})
        restricted = tuple(RestrictedSummary(name, HotSpot(**v["worst"]) if v.get("worst") else None,
                                             tuple(Minimum(z, m.get("min_margin"), int(m.get("cell", -1)))
                                                   for z, m in v.get("zones", {}).items()))
                           for name, v in result.get("envelopes", {}).items())
        return cls(HotSpot(**worst) if worst else None, hot, groups("zones"), groups("laminates"),
                   groups("cases"), groups("criteria"), int(result.get("flagged_cells", 0)),
                   tuple(result.get("flagged_examples", ())), tuple(result.get("notes", ())),
                   tuple(ShearCheck(name, v["mean"], v["max"], int(v["fallback_cells"])) for name, v in shear.items()),
                   str(result.get("cell_order", "")),
                   tuple(ProgressiveZone(name, **v) for name, v in result.get("progressive", {}).items()),
                   restricted, int(result.get("misaligned_cells", 0)))


@dataclass(frozen=True)
class RunMeta:
    """Everything a results store says about its run besides the arrays (docs/results.md)."""

    title: str
    units: str
    unit_labels: dict[str, str]
    store_kind: str
    caution: str
    provenance: Provenance
    analysis: AnalysisInfo
    materials: tuple[MaterialInfo, ...]
    sections: tuple[SectionInfo, ...]
    zones: tuple[ZoneInfo, ...]
    cases: tuple[CaseInfo, ...]
    criteria: tuple[CriterionInfo, ...]
    summary: RunSummary = field(default_factory=RunSummary)
    conventions: str = "docs/conventions.md"
    version: int = META_VERSION

    # ------------------------------------------------------------------ look-ups
    def label(self, kind: str) -> str:
        """The unit label of a quantity kind (``stress`` → ``MPa``); ``-`` for dimensionless, the kind if unknown."""
        return self.unit_labels.get(kind, kind)

    @property
    def case_names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.cases)

    @property
    def criteria_used(self) -> tuple[str, ...]:
        return self.analysis.criteria

    def criterion(self, name: str) -> CriterionInfo:
        return next(c for c in self.criteria if c.name == name)

    def material(self, name: str) -> MaterialInfo:
        return next(m for m in self.materials if m.name == name)


from postproc.meta_json import build, meta_from_json, meta_to_json  # noqa: E402,F401  (the JSON form)
