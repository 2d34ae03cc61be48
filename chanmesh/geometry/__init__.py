"""Pure-numpy geometry: centrelines, cross-sections and analytic reference values (no gmsh)."""

from chanmesh.geometry.centerline import Arc, Centerline, Line, Spiral, centerline_of
from chanmesh.geometry.section import SectionShape, section_shape_of

__all__ = ["Arc", "Centerline", "Line", "Spiral", "SectionShape", "centerline_of", "section_shape_of"]
