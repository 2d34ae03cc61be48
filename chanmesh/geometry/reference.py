"""Analytic reference values of a design's solid: the numbers meshes are checked against.

For a section of area A swept along a planar centreline of length L whose heading turns by a
total of Phi (rad, counter-clockwise positive), with the section centroid at offset u_c along
n = t x z, the curve traced by the centroid has length L + u_c Phi (offset-curve length,
from d(p + u n)/ds = (1 + kappa u) t), and Pappus's centroid theorem in its general form
(Goodman & Goodman 1969) gives the volume A (L + u_c Phi). The same offset formula gives the
side-wall areas exactly; top and bottom integrate (1 + kappa u) across the width, whose
kappa-term vanishes for a centred width.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from chanmesh.design.model import ChambersPath, Design
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.section import SectionShape, section_shape_of


@dataclass(frozen=True)
class Reference:
    """Exact figures of the solid, SI units."""

    centerline_length: float  # m
    volume: float  # m^3
    inlet_area: float  # m^2
    outlet_area: float  # m^2
    wall_area: float  # m^2
    plan_area: float  # m^2, footprint seen from above


def reference_of(design: Design) -> Reference:
    """Exact volume and boundary areas of the channel solid."""
    line = centerline_of(design)
    shape = section_shape_of(design)
    L, phi = line.length, line.turning
    A = shape.area
    if isinstance(design.path, ChambersPath):
        return _chambers(design.path, shape, L)
    u_c, _ = shape.centroid
    w2 = 0.5 * shape.width
    volume = A * (L + u_c * phi)
    sides = shape.h_inner * (L - w2 * phi) + shape.h_outer * (L + w2 * phi)
    slant = math.hypot(shape.width, shape.h_outer - shape.h_inner)
    wall = sides + shape.width * L + slant * L
    return Reference(L, volume, A, A, wall, shape.width * L)


def _chambers(path: ChambersPath, shape: SectionShape, L: float) -> Reference:
    h = shape.mean_height
    extra = path.count * path.chamber_length * (path.chamber_width - shape.width)
    plan = shape.width * L + extra
    side_length = 2 * L + 2 * path.count * (path.chamber_width - shape.width)
    wall = 2 * plan + h * side_length
    return Reference(L, plan * h, shape.area, shape.area, wall, plan)
