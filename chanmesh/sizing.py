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
    try:
        grown = ratio**half
    except OverflowError:  # so many cells that the wall cell underflows
        return 0.0
    # sum of both halves: 2 h1 (g^half - 1)/(g - 1), plus the middle cell h1 g^half when n is odd
    total = 2.0 * (grown - 1.0) / (ratio - 1.0) + (grown if odd else 0.0)
    return length / total


def ratio_for_first_cell(length: float, n: int, first: float) -> float:
    """Growth ratio that makes the wall-adjacent cell ``first`` long (inverse of ``first_cell``).

    Lengths in metres. A ``first`` so small that no ratio up to ``MAX_RATIO`` reaches it is a
    ``DesignError`` on ``mesh.first_cell`` (the only key that asks for a first cell)."""
    uniform = length / n
    if first > uniform * (1 + 1e-12):
        raise ValueError(f"wall-adjacent cell {first:g} is longer than the uniform cell {uniform:g}")
    if abs(first - uniform) <= 1e-12 * uniform or n <= 2:
        return 1.0
    smallest = first_cell(length, n, MAX_RATIO)
    if first < smallest:
        raise DesignError(
            "mesh.first_cell", Shown(f"{first * 1e6:.4g} um"),
            f"is too small for {n} cells over {length * 1e6:.4g} um: it needs a growth ratio above "
            f"{MAX_RATIO:g} (smallest reachable wall-adjacent cell {smallest * 1e6:.3g} um); give a larger first_cell or more cells",
        )
    from scipy.optimize import brentq  # here, not at the top: `chanmesh numbers` starts without scipy.optimize

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
        n = max(1, int(round(length / h_max)))
        return np.linspace(0.0, length, n + 1)
    m = max(1, int(math.ceil(math.log(h_max / h1) / math.log(ratio) - 1e-9)))
    ramp_length = h1 * (ratio**m - 1.0) / (ratio - 1.0) if m * h1 < length else math.inf
    middle = length - 2.0 * ramp_length
    last = h1 * ratio ** (m - 1)  # in [h_max / ratio, h_max], since h1 ratio^m >= h_max
    # the uniform middle cell c must keep the step from the ramp within the ratio both ways,
    # c in [last / ratio, last ratio]; of the counts that allow it, the one nearest h_max
    fewest = max(1, int(math.ceil(middle / (last * ratio) - 1e-9))) if middle > 0 else 1
    most = int(math.floor(middle * ratio / last + 1e-9)) if middle > 0 else 0
    if most < fewest:
        # the two ramps meet (or leave too little between them): the fewest cells of a
        # symmetric progression that starts at exactly h1 and grows by at most ``ratio``
        lo, hi = 1, 2
        while first_cell(length, hi, ratio) > h1:
            lo, hi = hi, hi * 2
        while hi - lo > 1:  # first_cell falls as n grows: bisect for the smallest n that fits
            mid = (lo + hi) // 2
            lo, hi = (mid, hi) if first_cell(length, mid, ratio) > h1 else (lo, mid)
        n = max(hi, 2)
        if h1 * n >= length:
            return np.linspace(0.0, length, n + 1)
        return graded_nodes(length, n, ratio_for_first_cell(length, n, h1))
    ramp = h1 * ratio ** np.arange(m)
    n_mid = min(max(int(round(middle / h_max)), fewest), most)
    cells = np.concatenate([ramp, np.full(n_mid, middle / n_mid), ramp[::-1]])
    nodes = np.concatenate([[0.0], np.cumsum(cells)])
    nodes *= length / nodes[-1]
    nodes[-1] = length
    return nodes


DEFAULT_CORE_CELLS = 16
"""Core cells over the smaller side of the section when neither ``cells_across`` nor
``cells_high`` is given and the section flow cannot be solved (normally ``default_core_cells``
chooses them from the section flow: docs/resolution.md)."""

WALL_DIVISIONS = 32
"""Default wall cell: min(width, height) / 32, or half the smaller core cell if that is larger
(a coarse core keeps a few wall layers instead of many); never larger than the core cell."""


@dataclass(frozen=True)
class Grading:
    """The wall grading of a design, shared by both meshers (metres).

    Every wall (side walls, bottom, top) gets the same law: the wall-adjacent cell ``h_wall``,
    growing by ``ratio`` per cell away from the wall until it reaches the core size; the core
    is uniform, ``h_core`` across the width and ``h_core_high`` over the (mean) height. A cell
    at wall distance d has about the size min(h_wall + (ratio - 1) d, core).
    """

    h_wall: float
    ratio: float
    h_core: float  # core cell across the width
    h_core_high: float = 0.0  # core cell over the height (0: same as h_core)

    @property
    def h_core_min(self) -> float:
        """The smaller core size: the isotropic core of the tetrahedral size field."""
        return min(self.h_core, self.h_core_high or self.h_core)

    def size(self, d: np.ndarray) -> np.ndarray:
        """Isotropic target size at wall distance ``d`` (the tetrahedral size field)."""
        return size_at_distance(d, self.h_wall, self.ratio, self.h_core_min)

    def nodes_across(self, length: float) -> np.ndarray:
        """Nodes in [0, length]: wall layers at both ends, core cells ``h_core`` between."""
        return capped_nodes(length, self.h_wall, self.ratio, self.h_core)

    def nodes_high(self, length: float) -> np.ndarray:
        """Nodes in [0, length] over the height: wall layers, core cells ``h_core_high``."""
        return capped_nodes(length, self.h_wall, self.ratio, self.h_core_high or self.h_core)

    def scaled(self, scale: float) -> "Grading":
        """Refined by ``scale``: sizes divided by it, the growth ratio replaced by its scale-th
        root, so every count (core and wall layers) grows by ``scale`` and a family's cell
        count by scale^3 (within rounding)."""
        return Grading(self.h_wall / scale, self.ratio ** (1.0 / scale), self.h_core / scale,
                       (self.h_core_high or self.h_core) / scale)


@dataclass(frozen=True)
class Resolution:
    """The resolution keys of a design as resolved (counts as written or defaulted)."""

    cells_across: float  # width / core cell across
    cells_high: float  # mean height / core cell over the height
    first_cell: float  # wall cell, m
    wall_ratio: float
    source: dict  # key -> "design" | "default" (where each value came from)


def resolution_of(design: Design) -> Resolution:
    """The four resolution keys of ``design`` with their defaults filled in (scale 1).

    * neither ``cells_across`` nor ``cells_high``: the core cell is min(width, height) /
      ``default_core_cells(design)`` (square core cells);
    * one of them: the other gives square core cells (rounded to a whole count, at least 1);
    * ``first_cell`` absent: min(width, height) / WALL_DIVISIONS, or half the smaller core cell
      if that is larger: from the default core and finer it stays put when the core is refined.
    """
    m = design.mesh
    w, H = design.section.width, design.section.height
    src = {}
    if m.cells_across is None and m.cells_high is None:
        core = min(w, H) / default_core_cells(design)
        n_a, n_h = max(1, round(w / core)), max(1, round(H / core))
        src["cells_across"] = src["cells_high"] = "default"
    elif m.cells_high is None:
        n_a = m.cells_across
        n_h = max(1, round(H * n_a / w))
        src["cells_across"], src["cells_high"] = "design", "default (square core cells)"
    elif m.cells_across is None:
        n_h = m.cells_high
        n_a = max(1, round(w * n_h / H))
        src["cells_across"], src["cells_high"] = "default (square core cells)", "design"
    else:
        n_a, n_h = m.cells_across, m.cells_high
        src["cells_across"] = src["cells_high"] = "design"
    if m.first_cell is not None:
        h1 = m.first_cell
        src["first_cell"] = "design"
    else:
        h1 = max(min(w, H) / WALL_DIVISIONS, 0.5 * min(w / n_a, H / n_h))
        src["first_cell"] = "default"
    return Resolution(float(n_a), float(n_h), h1, m.wall_ratio, src)


def default_core_cells(design: Design) -> int:
    """Core cells over the section's smaller side when the design gives no count: the coarsest
    hexahedral section grid that passes the resolution figure at the design's operating point
    (``chanmesh.resolution.choose_core_cells``); ``DEFAULT_CORE_CELLS`` when the section flow
    cannot be solved there."""
    from chanmesh.errors import ChanmeshError

    try:
        from chanmesh.resolution import choose_core_cells

        return choose_core_cells(design)
    except (ChanmeshError, ImportError):  # no section flow here (not converged, not installed)
        return DEFAULT_CORE_CELLS


def grading_of(design: Design, scale: float = 1.0) -> Grading:
    """The grading of ``design`` refined by ``scale`` (see ``Grading.scaled``).

    Core cells: width / cells_across and mean height / cells_high; wall cell: first_cell
    (never larger than the smaller core cell); growth ratio: wall_ratio."""
    r = resolution_of(design)
    w, H = design.section.width, design.section.height
    core_a, core_h = w / r.cells_across, H / r.cells_high
    h1 = min(r.first_cell, core_a, core_h)
    return Grading(h1, r.wall_ratio, core_a, core_h).scaled(scale)


def tet_grading(design: Design, scale: float = 1.0) -> Grading:
    """The tetrahedral size field: the same grading, refined by exactly ``scale``."""
    return grading_of(design, scale)
