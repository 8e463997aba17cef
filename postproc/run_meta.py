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

import dataclasses
import json
import types
import typing
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
    """

    material: str
    angle: float
    thickness: float


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
        """z of the ply interfaces, bottom to top (reference surface at 0)."""
        z = [self.offset - self.thickness / 2.0]
        for p in self.plies:
            z.append(z[-1] + p.thickness)
        return tuple(z)


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
class AnalysisInfo:
    criteria: tuple[str, ...]
    factor_of_safety: tuple[Named, ...]
    transverse_shear: str
    shear_factor: float
    wrinkling_coefficient: float
    hot_spots: int
    check_ranges: bool = True
    defaults: tuple[DefaultUsed, ...] = ()


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

    @classmethod
    def from_result(cls, result: Mapping[str, Any]) -> "RunSummary":
        """From :meth:`postproc.summary.SummaryAccumulator.result` (name-keyed groups become tuples)."""
        def groups(key: str) -> tuple[Minimum, ...]:
            return tuple(Minimum(name, v.get("min_margin"), int(v.get("cell", -1)), v.get("laminate", ""))
                         for name, v in result.get(key, {}).items())

        hot = tuple(HotSpot(**h) for h in result.get("hot_spots", ()))
        worst = result.get("worst")
        shear = result.get("transverse_shear", {}).get("zones", {})
        return cls(HotSpot(**worst) if worst else None, hot, groups("zones"), groups("laminates"),
                   groups("cases"), groups("criteria"), int(result.get("flagged_cells", 0)),
                   tuple(result.get("flagged_examples", ())), tuple(result.get("notes", ())),
                   tuple(ShearCheck(name, v["mean"], v["max"], int(v["fallback_cells"])) for name, v in shear.items()),
                   str(result.get("cell_order", "")))


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


# ---------------------------------------------------------------------- JSON
def meta_to_json(meta: RunMeta) -> str:
    """JSON text of a :class:`RunMeta` (dataclasses as objects, tuples as lists)."""
    return json.dumps(dataclasses.asdict(meta), ensure_ascii=False, separators=(",", ":"))


def meta_from_json(text: str) -> RunMeta:
    """The :class:`RunMeta` of :func:`meta_to_json` text.

    Raises
    ------
    ValueError
        Text that is not such a document (a missing field without a default, a wrong type).
    """
    return build(RunMeta, json.loads(text))


def build(cls, data: Any):
    """Construct ``cls`` (a type hint: a dataclass, tuple, dict, union or plain type) from JSON data."""
    origin = typing.get_origin(cls)
    if dataclasses.is_dataclass(cls):
        if not isinstance(data, Mapping):
            raise ValueError(f"{cls.__name__}: expected an object, got {type(data).__name__}")
        hints = typing.get_type_hints(cls)
        kwargs = {}
        for f in dataclasses.fields(cls):
            if f.name in data:
                kwargs[f.name] = build(hints[f.name], data[f.name])
            elif f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                raise ValueError(f"{cls.__name__}: missing field '{f.name}'")
        return cls(**kwargs)
    if origin in (Union, types.UnionType):
        args = typing.get_args(cls)
        if data is None and type(None) in args:
            return None
        errors = []
        for arg in args:
            if arg is type(None):
                continue
            try:
                return build(arg, data)
            except (ValueError, TypeError) as err:
                errors.append(str(err))
        raise ValueError("; ".join(errors) or f"no type of {cls} fits {data!r}")
    if origin is tuple:
        args = typing.get_args(cls)
        if not isinstance(data, (list, tuple)):
            raise ValueError(f"expected a list, got {type(data).__name__}")
        if len(args) == 2 and args[1] is Ellipsis:
            return tuple(build(args[0], v) for v in data)
        return tuple(build(a, v) for a, v in zip(args, data))
    if origin is dict:
        _, value_type = typing.get_args(cls)
        if not isinstance(data, Mapping):
            raise ValueError(f"expected an object, got {type(data).__name__}")
        return {str(k): build(value_type, v) for k, v in data.items()}
    if cls is Any:
        return data
    if cls is float:
        if isinstance(data, bool) or not isinstance(data, (int, float)):
            raise ValueError(f"expected a number, got {data!r}")
        return float(data)
    if cls in (int, bool, str):
        if not isinstance(data, cls) or (cls is int and isinstance(data, bool)):
            raise ValueError(f"expected {cls.__name__}, got {data!r}")
        return data
    raise TypeError(f"unsupported type in the run metadata: {cls!r}")
