"""One-line notes of a recovery run about what was assumed or looks unusual in its inputs.

They go into the run summary (``summary["notes"]``, stored with the results) and on stderr; none of them stops
the run. Each function returns a list of zero or one sentences.
"""

from __future__ import annotations

from typing import Callable

import numpy as np

from shells.engineering import flags

#: Cells read at a time when scanning the resultants for moments.
SCAN_CELLS = 65536


def ranges_note(check_ranges: bool) -> list[str]:
    """Say that material values were not checked against plausible ranges, when so."""
    if check_ranges:
        return []
    return ["material values were not checked against plausible ranges ([analysis] check_ranges = false)"]


def membrane_only_note(sections, section_of_cell: np.ndarray, n_cells: int,
                       read: Callable[[int, int], np.ndarray], names: tuple[str, ...] = ()) -> list[str]:
    """A note when the input carries no moment at all while a section used couples extension and bending.

    Parameters
    ----------
    sections : sequence of shells.section.Section
    section_of_cell : int (ncell,)
    n_cells : int
    read : callable(start, stop) -> (nstep, stop − start, 8)
        The input steps of a cell range (element frame); scanned block by block, stopping at the first moment.
    names : tuple of str
        Section names, for the note.
    """
    used = np.unique(section_of_cell)
    coupled = [int(s) for s in used if flags(sections[s].laminate, sections[s].props)["coupled"]]
    if not coupled:
        return []
    for start in range(0, n_cells, SCAN_CELLS):
        block = read(start, min(n_cells, start + SCAN_CELLS))
        moments = np.nan_to_num(block[..., 3:6], nan=0.0, posinf=1.0, neginf=1.0)
        if np.any(moments != 0.0):
            return []
    label = ", ".join(repr(names[s]) if s < len(names) else str(s) for s in coupled[:5])
    return [f"the resultants carry no moments (M = 0 in every cell and step) while section(s) {label} couple "
            "extension and bending (B ≠ 0 about the reference surface): that describes a wall free to curve "
            "under its membrane load; check that the solver wrote its moments"]
