"""A definition tied to a mesh: zones, element frames, material angles, sections and section fields."""

from bridge.model.build import Model, build_model

__all__ = ["Model", "build_model"]
