"""XInclude references inside an XDMF file, resolved in place (what meshio's time-series writer emits).

meshio writes each step of a time series as a grid whose topology and geometry are an
``<xi:include xpointer="xpointer(//Grid[@Name=&quot;mesh&quot;]/*[self::Topology or self::Geometry])"/>``
pointing at a shared grid of the same file. :func:`resolve_includes` replaces every such element by copies
of the elements it points to. Only references into the same file by grid name are followed; anything else is
refused with a message (a silent partial read would be worse).
"""

from __future__ import annotations

import copy
import re
import xml.etree.ElementTree as ET

from shells.errors import MeshError

XI = "{http://www.w3.org/2003/XInclude}include"
_POINTER = re.compile(r"""^xpointer\(//Grid\[@Name=["'](?P<grid>[^"']*)["']\]/(?P<sel>.+)\)$""")
_ANY_OF = re.compile(r"^\*\[(?P<names>self::\w+(?:\s+or\s+self::\w+)*)\]$")


def _selected(selector: str) -> set[str] | None:
    """Child tags a selector picks (None: every child)."""
    if selector == "*":
        return None
    m = _ANY_OF.match(selector)
    if m:
        return set(re.findall(r"self::(\w+)", m.group("names")))
    if re.fullmatch(r"\w+", selector):
        return {selector}
    raise ValueError(selector)


def resolve_includes(root: ET.Element, where: str) -> None:
    """Replace every ``xi:include`` of ``root`` by the elements it points to (in place).

    Raises
    ------
    MeshError
        For a reference to another file, an unknown grid, or a pointer form not handled here.
    """
    grids = {g.get("Name"): g for g in root.iter("Grid") if g.get("Name")}
    for parent in list(root.iter()):
        for pos, child in reversed(list(enumerate(list(parent)))):
            if child.tag != XI:
                continue
            pointer = child.get("xpointer", "")
            if child.get("href"):
                raise MeshError(f"XInclude of another file ({child.get('href')}) is not followed; write one file",
                                where)
            m = _POINTER.match(pointer.strip())
            try:
                tags = _selected(m.group("sel")) if m else None
            except ValueError:
                m = None
            if m is None:
                raise MeshError(f"XInclude pointer {pointer!r} is not one plybridge follows (//Grid[@Name=...]/"
                                "children); write the topology and geometry in each grid", where)
            target = grids.get(m.group("grid"))
            if target is None:
                raise MeshError(f"XInclude points at grid {m.group('grid')!r}, which the file does not have", where)
            parent.remove(child)
            picked = [copy.deepcopy(e) for e in target if e.tag != XI and (tags is None or e.tag in tags)]
            for k, element in enumerate(picked):
                parent.insert(pos + k, element)
