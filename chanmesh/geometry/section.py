"""Cross-section shapes in the section frame (u across the width, v = z up), in metres.

The bottom is flat at v = -H/2, with H the mean height, so that at the centreline (u = 0)
the section spans -H/2 .. +H/2 and its mid-height lies on the centreline. For a trapezoid the
top runs straight from height ``h_inner`` at u = -w/2 to ``h_outer`` at u = +w/2, and the
centroid lies off the centreline: see ``SectionShape.centroid``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from chanmesh.design.model import Design, Section


@dataclass(frozen=True)
class SectionShape:
    """A rectangle or a right trapezoid with vertical side walls."""

    width: float
    h_inner: float
    h_outer: float

    @classmethod
    def of(cls, section: Section) -> "SectionShape":
        return cls(section.width, section.height_inner, section.height_outer)

    @property
    def mean_height(self) -> float:
        return 0.5 * (self.h_inner + self.h_outer)

    @property
    def max_height(self) -> float:
        return max(self.h_inner, self.h_outer)

    @property
    def bottom(self) -> float:
        return -0.5 * self.mean_height

    def top(self, u: np.ndarray | float) -> np.ndarray | float:
        """Height of the top wall at u (linear between the side walls)."""
        frac = (np.asarray(u) + 0.5 * self.width) / self.width
        return self.bottom + self.h_inner + (self.h_outer - self.h_inner) * frac

    @property
    def corners(self) -> np.ndarray:
        """(4, 2) corners (u, z), counter-clockwise from inner-bottom."""
        w2 = 0.5 * self.width
        b = self.bottom
        return np.array([[-w2, b], [w2, b], [w2, b + self.h_outer], [-w2, b + self.h_inner]])

    @property
    def area(self) -> float:
        return self.width * self.mean_height

    @property
    def perimeter(self) -> float:
        """Wetted perimeter: bottom, both sides and the (possibly slanted) top."""
        dh = self.h_outer - self.h_inner
        return self.width + self.h_inner + self.h_outer + math.hypot(self.width, dh)

    @property
    def hydraulic_diameter(self) -> float:
        """D_h = 4 A / P."""
        return 4.0 * self.area / self.perimeter

    @property
    def centroid(self) -> tuple[float, float]:
        """(u_c, z_c). For parallel vertical sides a = h_inner, b = h_outer (handbook trapezoid):
        u_c = w (b - a) / (6 (a + b)),  z_c = bottom + (a^2 + a b + b^2) / (3 (a + b))."""
        a, b, w = self.h_inner, self.h_outer, self.width
        u_c = w * (b - a) / (6.0 * (a + b))
        v_c = self.bottom + (a * a + a * b + b * b) / (3.0 * (a + b))
        return u_c, v_c

    def contains(self, u: np.ndarray, v: np.ndarray, tol: float = 0.0) -> np.ndarray:
        """Mask of section-frame points inside the shape (tol widens it)."""
        u = np.asarray(u)
        v = np.asarray(v)
        return (
            (np.abs(u) <= 0.5 * self.width + tol)
            & (v >= self.bottom - tol)
            & (v <= self.top(np.clip(u, -0.5 * self.width, 0.5 * self.width)) + tol)
        )


def section_shape_of(design: Design) -> SectionShape:
    return SectionShape.of(design.section)
