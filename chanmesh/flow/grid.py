"""The section grid the section-flow solver works on: nodes in the section frame and cells.

Coordinates are the README's section frame in metres: u across the width along n (u = -w/2 is
the inner wall of a left-turning bend), z up, flat bottom at z = -H/2 (H the mean height), top
straight from ``height_inner`` at u = -w/2 to ``height_outer`` at u = +w/2. The default grid is
the hexahedral mesher's section grid law: a wall-graded tensor grid (``sizing.graded_nodes``),
mapped column by column onto the local height, so a trapezoid's slanted top is a grid line.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from chanmesh.errors import DesignError
from chanmesh.geometry.section import SectionShape
from chanmesh.sizing import graded_nodes

DEFAULT_CELLS_LONG = 20
DEFAULT_CELLS_SHORT = 10
DEFAULT_CELLS_COMPACT = 16
"""... and along each side of a compact section (shorter side at least half the longer), which
would otherwise get 20 x 20 and a solve several times slower."""
"""Default quadrilaterals along the longer and (at least) along the shorter side of the section
for the reference grid (each split into two triangles for P2-P1): one station then solves in
under 2 s here (bench/dean_speed.py)."""
DEFAULT_RATIO = 1.2
"""Growth ratio of the default grid away from each wall, the design files' default ``wall_ratio``
(on a 24 x 12 grid it brings the straight 3:1 duct's profile to 6e-5 of the series against 1.5e-4
with 1.1 and 3.5e-4 uniform: the steep wall gradients are what needs the cells)."""


@dataclass(frozen=True)
class SectionGrid:
    """Nodes ``points`` (n, 2) as (u, z) in metres and ``cells`` (m, 3) triangles or (m, 4)
    quadrilaterals (counter-clockwise). Every node on the section boundary is a wall (no slip).
    ``shape`` = (cells across, cells high) for a structured grid, else None."""

    points: np.ndarray
    cells: np.ndarray
    shape: tuple[int, int] | None = None
    description: str = ""
    meta: dict[str, Any] = field(default_factory=dict, compare=False)

    def triangles(self) -> np.ndarray:
        """(k, 3) triangles: the cells themselves, or each quadrilateral split along its 0-2 diagonal."""
        c = np.asarray(self.cells, dtype=np.int64)
        if c.shape[1] == 3:
            return c
        if c.shape[1] != 4:
            raise ValueError(f"cells must be triangles or quadrilaterals, got {c.shape[1]} nodes per cell")
        return np.concatenate([c[:, [0, 1, 2]], c[:, [0, 2, 3]]])

    def to_dict(self) -> dict[str, Any]:
        return {
            "nodes": int(len(self.points)),
            "cells": int(len(self.cells)),
            "cell_kind": "triangle" if np.asarray(self.cells).shape[1] == 3 else "quadrilateral",
            "cells_across": None if self.shape is None else self.shape[0],
            "cells_high": None if self.shape is None else self.shape[1],
            "description": self.description,
        }


def shape_of(section: Any) -> SectionShape:
    """A ``SectionShape`` from a design ``Section``, a ``SectionShape`` or anything with
    ``width``, ``height_inner`` and ``height_outer``."""
    if isinstance(section, SectionShape):
        return section
    return SectionShape(float(section.width), float(section.height_inner), float(section.height_outer))


def _check_count(key: str, n: int | None) -> None:
    if n is not None and (isinstance(n, bool) or not isinstance(n, (int, np.integer)) or not 2 <= n <= 2000):
        raise DesignError(key, n, "must be a whole number of cells in [2, 2000]")


def structured_grid(section: Any, u_nodes: np.ndarray, eta: np.ndarray, description: str = "") -> SectionGrid:
    """Tensor grid of ``u_nodes`` (across, metres, from -w/2 to +w/2) and normalised heights
    ``eta`` in [0, 1], each column mapped onto the local height; quadrilateral cells."""
    shape = shape_of(section)
    u = np.asarray(u_nodes, float)
    eta = np.asarray(eta, float)
    ni, nj = len(u) - 1, len(eta) - 1
    bottom = shape.bottom
    top = np.asarray(shape.top(u))
    uu = np.repeat(u, nj + 1)
    zz = (bottom + eta[None, :] * (top[:, None] - bottom)).ravel()
    points = np.column_stack([uu, zz])
    idx = np.arange((ni + 1) * (nj + 1)).reshape(ni + 1, nj + 1)
    a, b = idx[:-1, :-1].ravel(), idx[1:, :-1].ravel()
    c, d = idx[1:, 1:].ravel(), idx[:-1, 1:].ravel()
    cells = np.column_stack([a, b, c, d])  # counter-clockwise in (u, z)
    return SectionGrid(points, cells, (ni, nj), description, {"u": u, "eta": eta})


def default_grid(section: Any, cells_across: int | None = None, cells_high: int | None = None,
                 ratio: float = DEFAULT_RATIO) -> SectionGrid:
    """The wall-graded structured grid of ``section`` (design ``Section`` or ``SectionShape``).

    Defaults: ``DEFAULT_CELLS_LONG`` along the longer side and the shorter side in proportion
    (at least ``DEFAULT_CELLS_SHORT``); when only one count is given, the other follows the
    aspect ratio (at least 4).
    """
    _check_count("--cells-across", cells_across)
    _check_count("--cells-high", cells_high)
    shape = shape_of(section)
    w, H = shape.width, shape.mean_height
    if cells_across is None and cells_high is None:
        long_side, short_side = max(w, H), min(w, H)
        n_long = DEFAULT_CELLS_LONG if short_side < 0.5 * long_side else DEFAULT_CELLS_COMPACT
        n_short = max(DEFAULT_CELLS_SHORT, int(round(n_long * short_side / long_side)))
        cells_across, cells_high = (n_long, n_short) if w >= H else (n_short, n_long)
    elif cells_across is None:
        cells_across = max(4, int(round(cells_high * w / H)))  # type: ignore[operator]
    elif cells_high is None:
        cells_high = max(4, int(round(cells_across * H / w)))
    u = graded_nodes(w, int(cells_across), ratio) - 0.5 * w
    eta = graded_nodes(1.0, int(cells_high), ratio)
    desc = f"structured {cells_across} x {cells_high} quadrilaterals (growth ratio {ratio:g} from each wall)"
    return structured_grid(shape, u, eta, desc)


def mirrored(grid: SectionGrid) -> SectionGrid:
    """The structured ``grid`` with each quadrilateral split into triangles so that the
    triangulation is its own mirror image about mid-height (upper half along the 0-2 diagonal,
    lower half along 1-3). Needs an even number of cells high. Used where a solution must stay
    exactly symmetric (the four-cell branch); the default split leans one way."""
    c = np.asarray(grid.cells, dtype=np.int64)
    if grid.shape is None or c.shape[1] != 4:
        raise DesignError("grid", grid.description, "a mirrored split needs a structured quadrilateral grid")
    ni, nj = grid.shape
    if nj % 2:
        raise DesignError("--cells-high", nj, "must be even for a grid symmetric about mid-height")
    upper = (np.arange(len(c)) % nj) >= nj // 2  # cell (i, j) is number i * nj + j
    tri = np.concatenate([c[upper][:, [0, 1, 2]], c[upper][:, [0, 2, 3]],
                          c[~upper][:, [0, 1, 3]], c[~upper][:, [1, 2, 3]]])
    return SectionGrid(grid.points, tri, grid.shape, grid.description + ", triangles mirrored about mid-height",
                       dict(grid.meta))
