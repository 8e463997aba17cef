"""Mechanics of layered shells on arrays: materials, stacking notation, section
properties, ply recovery kernels and failure criteria.

No file formats and no command line live here; see ``bridge`` for those.
Importing the package points numba's cache at a folder keyed on these sources
(:mod:`shells.numba_cache`).
"""
from .numba_cache import configure as _configure_numba_cache

__version__ = "0.1.0"

_configure_numba_cache()
