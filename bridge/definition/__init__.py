"""The definition file: materials, laminates, zones, cases and settings, parsed once into frozen dataclasses."""

from bridge.definition.loader import Definition, load_definition, parse_definition, read_toml

__all__ = ["Definition", "load_definition", "parse_definition", "read_toml"]
