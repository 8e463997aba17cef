"""Mechanics of layered shells on arrays: materials, stacking notation, section
properties, ply recovery kernels and failure criteria.

No file formats and no command line live here; see ``bridge`` for those.
"""
__version__ = "0.1.0"
