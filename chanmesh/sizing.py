"""Wall grading shared by both meshers: a symmetric geometric progression toward the walls.

With ``n`` cells over a length ``L`` and growth ratio ``g`` between neighbouring cells, the
cells grow from each wall toward the middle: h1, h1 g, h1 g^2, ... A cell at distance d from
the nearest wall then has size h(d) = h1 + (g - 1) d, up to the middle (core) size. The
tetrahedral mesher uses exactly that h(d) as its size field, so both meshers grade alike.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from chanmesh.design.model import Design
from chanmesh.errors import DesignError, Shown

MAX_RATIO = 50.0
"""Largest growth ratio a ``first_cell`` may imply (``ratio_for_first_cell`` searches up to it;
the feasibility checks refuse a ``first_cell`` needing more across the width)."""


def _half_counts(n: int) -> tuple[int, bool]:
    """Cells from one wall to the middle, and whether a middle cell is shared (odd n)."""
    return n // 2, n % 2 == 1


def first_cell(length: float, n: int, ratio: float) -> float:
    """Wall-adjacent cell size of a symmetric progression of ``n`` cells over ``length``."""
    if n < 1:
        raise ValueError(f"n = {n}, but a progression needs at least one cell")
    if ratio == 1.0 or n == 1:
        return length / n
    half, odd = _half_counts(n)
    # sum of both halves: 2 h1 (g^half - 1)/(g - 1), plus the middle cell h1 g^half when n is odd
    total = 2.0 * (ratio**half - 1.0) / (ratio - 1.0) + (ratio**half if odd else 0.0)
    return length / total


def ratio_for_first_cell(length: float, n: int, first: float) -> float:
    """Growth ratio that makes the wall-adjacent cell ``first`` long (inverse of ``first_cell``).

    Lengths in metres. A ``first`` so small that no ratio up to ``MAX_RATIO`` reaches it is a
    ``DesignError`` on ``mesh.first_cell`` (the only key that asks for a first cell)."""
    uniform = length / n
    if first > uniform * (1 + 1e-12):
        raise ValueError(f"first cell {first:g} is longer than the uniform cell {uniform:g}")
    if abs(first - uniform) <= 1e-12 * uniform or n <= 2:
        return 1.0
    smallest = first_cell(length, n, MAX_RATIO)
    if first < smallest:
        raise DesignError(
            "mesh.first_cell", Shown(f"{first * 1e6:.4g} um"),
            f"is too small for {n} cells over {length * 1e6:.4g} um: it needs a growth ratio above "
            f"{MAX_RATIO:g} (smallest reachable first cell {smallest * 1e6:.3g} um); give a larger first_cell or more cells",
        )
    return float(brentq(lambda g: first_cell(length, n, g) - first, 1.0 + 1e-12, MAX_RATIO, xtol=1e-14, rtol=1e-14))


def graded_nodes(length: float, n: int, ratio: float) -> np.ndarray:
    """Node positions in [0, length] of a symmetric progression: shape (n + 1,)."""
    h1 = first_cell(length, n, ratio)
    half, odd = _half_counts(n)
    sizes = h1 * ratio ** np.arange(half)
    cells = np.concatenate([sizes, [h1 * ratio**half] if odd else [], sizes[::-1]])
    nodes = np.concatenate([[0.0], np.cumsum(cells)])
    nodes *= length / nodes[-1]  # remove round-off so the last node is exactly at length
    nodes[-1] = length
    return nodes


def core_size(length: float, n: int, ratio: float) -> float:
    """Largest (middle) cell of the progression."""
    h1 = first_cell(length, n, ratio)
    half, odd = _half_counts(n)
    return h1 * ratio ** (half if odd else max(half - 1, 0))


def size_at_distance(d: np.ndarray, h1: float, ratio: float, h_core: float) -> np.ndarray:
    """Target cell size at wall distance ``d``: min(h1 + (g - 1) d, h_core)."""
    return np.minimum(h1 + (ratio - 1.0) * np.maximum(d, 0.0), h_core)


def cells_for(length: float, size: float) -> int:
    """Cells of about ``size`` that fit ``length`` (at least one)."""
    return max(1, int(math.ceil(length / size - 1e-9)))


def capped_nodes(length: float, h1: float, ratio: float, h_max: float) -> np.ndarray:
    """Node positions in [0, length] growing from both ends by ``ratio`` from ``h1`` up to
    ``h_max``, uniform in between: shape (n + 1,).

    Used where a wall closes an interval along the flow (the end walls of a chamber): the
    plain symmetric progression cannot cap its middle cell, whose size tends to
    length (g - 1) / 2 however many cells are added.
    """
    if ratio <= 1.0 or h1 >= h_max:
        n = cells_for(length, h_max)
        return np.linspace(0.0, length, n + 1)
    m = max(1, int(math.ceil(math.log(h_max / h1) / math.log(ratio))))
    ramp = h1 * ratio ** np.arange(m)
    middle = length - 2.0 * ramp.sum()
    if middle < ramp[-1]:
        # the two ramps meet: the smallest symmetric progression whose wall cell is <= h1
        n = 2
        while first_cell(length, n, ratio) > h1 and n < 100_000:
            n += 1
        return graded_nodes(length, n, ratio)
    n_mid = max(1, int(round(middle / h_max)))
    cells = np.concatenate([ramp, np.full(n_mid, middle / n_mid), ramp[::-1]])
    nodes = np.concatenate([[0.0], np.cumsum(cells)])
    nodes *= length / nodes[-1]
    nodes[-1] = length
    return nodes


@dataclass(frozen=True)
class Grading:
    """The wall grading of a design, shared by both meshers (metres)."""

    h_wall: float
    ratio: float
    h_core: float

    def size(self, d: np.ndarray) -> np.ndarray:
        return size_at_distance(d, self.h_wall, self.ratio, self.h_core)


def grading_of(design: Design, scale: float = 1.0) -> Grading:
    """Grading from ``mesh.cells_across`` with ``wall_ratio`` or ``first_cell``; ``scale``
    refines it (sizes divided by ``scale``, the growth ratio replaced by its scale-th root so
    that a refined family keeps the same stretching per unit length)."""
    m = design.mesh
    w = design.section.width
    n = max(2, int(round(m.cells_across * scale)))
    if m.first_cell is not None:
        h1 = m.first_cell / scale
        g = ratio_for_first_cell(w, n, min(h1, w / n))
    else:
        g = m.wall_ratio ** (1.0 / scale)
        h1 = first_cell(w, n, g)
    return Grading(h1, g, core_size(w, n, g))


def tet_grading(design: Design, scale: float = 1.0) -> Grading:
    """The tetrahedral size field refined by exactly ``scale``: the design's own grading with
    every size divided by ``scale`` and the growth ratio replaced by its scale-th root. Unlike
    the hexahedral grid, the size field needs no whole number of cells across, so a tet family
    refines by the ratio asked, not by a rounded one."""
    base = grading_of(design)
    return Grading(base.h_wall / scale, base.ratio ** (1.0 / scale), base.h_core / scale)
