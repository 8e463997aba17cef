"""Definition files (TOML): the analyst's materials, laminates, zones, cases and settings.

The schema is documented in ``docs/definition.md``; a complete commented
example is ``examples/definition.toml``. Files are read with the standard
library's ``tomllib`` (no code is evaluated) and every value is converted once,
on load, to the declared unit system.
"""

from __future__ import annotations

import hashlib
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

from shells.errors import DefinitionError, InputError
from shells.laminate import Laminate
from shells.materials import Material

from bridge.definition.analysis import Analysis, parse_analysis
from bridge.definition.cases import Cases, parse_cases
from bridge.definition.frames import FrameSettings, parse_frames
from bridge.definition.laminates import parse_laminates
from bridge.definition.materials import parse_materials
from bridge.definition.ranges import check_laminates_and_cases, check_offsets
from bridge.definition.result_files import ResultFiles, parse_result_files
from bridge.definition.resultants import ResultantFields, ResultantSettings, parse_fields, parse_resultant_settings
from bridge.definition.schema import check_keys, clean_document
from bridge.definition.solver_plies import SolverPlies, parse_solver_plies
from bridge.definition.units import UnitSystem, system
from bridge.definition.zones import Zone, parse_zones

#: Largest definition file read (bytes): a bound on everything parsed.
MAX_BYTES = 4 * 1024 * 1024

TOP_LEVEL = ("units", "title", "description", "materials", "laminates", "analysis", "zones", "frames", "cases",
             "combinations", "fields", "resultants", "solver_plies", "result_files")


@dataclass(frozen=True)
class Definition:
    """Everything a definition file declares, converted to one unit system and checked.

    Attributes
    ----------
    frames : FrameSettings
        ``[frames]``: the element-frame reference (docs/meshes.md).
    fields, resultants : ResultantFields, ResultantSettings
        ``[fields]`` and ``[resultants]``: names and conventions of the solver's resultant arrays.
    solver_plies : SolverPlies
        ``[solver_plies]``: names and conventions of the solver's ply values (docs/compare.md).
    result_files : ResultFiles
        ``[result_files]``: how the solver's own files are read (point clouds, case names, tensor order).
    """

    source: str
    sha256: str
    units: UnitSystem
    title: str
    materials: Mapping[str, Material]
    laminates: Mapping[str, Laminate]
    analysis: Analysis
    zones: tuple[Zone, ...] = ()
    cases: Cases = field(default_factory=Cases)
    frames: FrameSettings = field(default_factory=FrameSettings)
    fields: ResultantFields = field(default_factory=ResultantFields)
    resultants: ResultantSettings = field(default_factory=ResultantSettings)
    solver_plies: SolverPlies = field(default_factory=SolverPlies)
    result_files: ResultFiles = field(default_factory=ResultFiles)


def read_toml(path: str | Path) -> tuple[dict[str, Any], str]:
    """Read a TOML file with a size bound; return (document, sha256 hex)."""
    path = Path(path)
    try:
        data = path.read_bytes() if path.stat().st_size <= MAX_BYTES else None
    except OSError as err:
        raise DefinitionError(f"cannot read the definition: {err.strerror}", str(path)) from None
    if data is None:
        raise DefinitionError(f"file is larger than {MAX_BYTES // 1024 // 1024} MiB; is it a definition?", str(path))
    try:
        doc = tomllib.loads(data.decode("utf-8"))
    except UnicodeDecodeError:
        raise DefinitionError("not UTF-8 text; save the definition as UTF-8", str(path)) from None
    except tomllib.TOMLDecodeError as err:
        raise DefinitionError(f"TOML syntax error: {err}; fix the line named", str(path)) from None
    return doc, hashlib.sha256(data).hexdigest()


def parse_definition(doc: Mapping[str, Any], source: str = "<definition>", sha256: str = "") -> Definition:
    """Build a :class:`Definition` from a parsed TOML document."""
    try:
        doc = clean_document(doc)  # names and strings: NFC, bounded, no control characters (docs/scale.md)
        check_keys(doc, TOP_LEVEL, "top level", required=("units", "materials", "laminates"))
        units = system(doc["units"], source)
        analysis = parse_analysis(doc.get("analysis", {}), units)
        materials = parse_materials(doc["materials"], units, analysis.check_ranges)
        laminates = parse_laminates(doc["laminates"], materials, units)
        title = doc.get("title", Path(source).stem)
        if not isinstance(title, str):
            raise DefinitionError("title must be a string")
        cases = parse_cases(doc.get("cases", {}), doc.get("combinations", {}), units, analysis.kinds)
        zones = parse_zones(doc.get("zones", []), laminates, units)
        if analysis.check_ranges:
            check_laminates_and_cases(laminates, cases, units)
            check_offsets(laminates, zones, units)
        return Definition(
            source=source, sha256=sha256, units=units, title=title,
            materials=materials, laminates=laminates, analysis=analysis,
            zones=zones,
            cases=cases,
            frames=parse_frames(doc.get("frames", {})),
            fields=parse_fields(doc.get("fields", {})),
            resultants=parse_resultant_settings(doc.get("resultants", {}), units),
            solver_plies=parse_solver_plies(doc.get("solver_plies", {}), units),
            result_files=parse_result_files(doc.get("result_files", {})),
        )
    except InputError as err:
        raise err.within(source) from None


def load_definition(path: str | Path) -> Definition:
    """Read and check a definition file.

    Raises
    ------
    shells.errors.DefinitionError
        With the file, the entry and the fix named in the message.
    """
    doc, digest = read_toml(path)
    return parse_definition(doc, str(path), digest)
