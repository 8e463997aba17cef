"""The exception hierarchy shared by every layer of plybridge.

Every error a user can cause by their input derives from :class:`InputError`
(itself a :class:`ValueError`), so Python callers may catch the built-in and
the command line turns any of them into one line on stderr and exit code 2.
The message names the file (when known), the entry and the fix.
"""

from __future__ import annotations

import unicodedata

#: Format characters that reorder text on a terminal or a page (bidirectional embeddings, overrides, isolates).
BIDI_CONTROLS = frozenset(map(chr, (*range(0x202A, 0x202F), *range(0x2066, 0x206A))))


def is_control(ch: str) -> bool:
    """True for a character that must never reach a terminal raw: C0 and C1 controls (NUL, ESC, U+0085 …),
    DEL, line and paragraph separators, and bidirectional controls."""
    return unicodedata.category(ch) in ("Cc", "Zl", "Zp") or ch in BIDI_CONTROLS


def printable(text: str) -> str:
    """``text`` on one line and safe for a terminal: every control character written as an escape (``\\x1b``)."""
    text = str(text)
    if not any(is_control(ch) for ch in text):
        return text
    return "".join(ch.encode("unicode_escape").decode("ascii") if is_control(ch) else ch for ch in text)


class PlybridgeError(Exception):
    """Base class of every error raised on purpose by plybridge."""


class InputError(PlybridgeError, ValueError):
    """Bad input: a definition, a mesh, resultants or an option.

    Parameters
    ----------
    message : str
        What is wrong and how to fix it.
    source : str, optional
        The file (or other origin) the bad value came from; prefixed to the
        message as ``source: message``.
    """

    def __init__(self, message: str, source: str | None = None):
        self.source = source
        self.detail = message
        # One line, nothing a terminal would act on: user strings inside messages are escaped here, once.
        super().__init__(printable(f"{source}: {message}" if source else message))

    def within(self, source: str) -> "InputError":
        """Return the same error attributed to ``source`` (if it has none yet)."""
        if self.source:
            return self
        return type(self)(self.detail, source)


class DefinitionError(InputError):
    """A definition file entry is missing, unknown, of the wrong type or out of range."""


class MaterialError(DefinitionError):
    """A material is non-physical or lacks a property a computation needs."""


class LayupError(DefinitionError):
    """A stacking sequence cannot be parsed or is empty or too long."""


class MeshError(InputError):
    """A mesh file cannot be read, has no shell cells, or has degenerate cells."""


class ResultantsError(InputError):
    """Resultant or solver-ply arrays are missing, mis-shaped or non-finite."""


class StoreError(InputError):
    """A results store is missing, corrupt, or of an unexpected layout."""
