"""Checking a solver's own ply output against an independent recovery."""
