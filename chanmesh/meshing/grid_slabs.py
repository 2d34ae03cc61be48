"""A swept hexahedral mesh walked in slabs of node layers, as flat arrays with corner shifts.

Why: per-cell figures (volumes, quality) of a swept mesh need each cell's eight corners. In
the full tensor grid (``meshing.sweep_grid``) node (k, i, j) sits at the flat *position*
(k (ni + 1) + i)(nj + 1) + j, so corner (dk, di, dj) of every cell of a slab is one contiguous
slice of the node coordinates, shifted by ``shift(dk, di, dj)``: no gathers, long numpy loops,
and the same floating-point operations as on gathered corners (so the same bits). Positions
with i = ni or j = nj hold no cell; their values are computed and dropped (``cells``). Nodes of
absent columns are NaN. Used only for meshes whose cells were proved to be the grid's
(``sweep_grid.proven_grid``).

Units: the mesh's (metres).
"""

from __future__ import annotations

from typing import Callable, Iterator, TypeVar

import numpy as np

from chanmesh.meshing.sweep_grid import SweepGrid

SLAB_CELLS = 32_768
"""Cells per slab (at least one layer): bounds the temporaries at a few MB (131,072 and 262,144
were no faster in a 1 M-hexahedron build; 262,144 raised its peak by 50 MB)."""

CORNERS = ((0, 0, 0), (0, 1, 0), (1, 1, 0), (1, 0, 0), (0, 0, 1), (0, 1, 1), (1, 1, 1), (1, 0, 1))
"""Corner offsets (along, across, up) of the VTK hexahedron, as ``SweepGrid.node_offsets``."""


def slabs(grid: SweepGrid) -> Iterator[tuple[int, int]]:
    """Cell layers (k0, k1) of about ``SLAB_CELLS`` cells each, in order."""
    nk, ni, nj = grid.shape
    step = max(1, SLAB_CELLS // max(1, ni * nj))
    for k0 in range(0, nk, step):
        yield k0, min(nk, k0 + step)


class NodeSlab:
    """Node coordinates of node layers k0..k2 (k2 >= k1) as three flat arrays ``p`` over the
    slab's positions, with room past the end for every shift from the positions of layers
    k0..k1 (``m`` positions) and one more layer. ``columns``: the grid's (k2 - k0, ni) columns
    that hold cells from layer k0 on; ``keep``: those of the slab's cells, None when the grid
    keeps every column."""

    def __init__(self, points: np.ndarray, grid: SweepGrid, numbers: np.ndarray | None, mask: np.ndarray,
                 k0: int, k1: int, k2: int | None = None) -> None:
        _, ni, nj = grid.shape
        self.k0, self.k1, self.k2 = k0, k1, k1 if k2 is None else k2
        self.ni, self.nj = ni, nj
        self.columns = mask[k0:self.k2]
        self.keep = None if grid.columns is None else mask[k0:k1]
        self.layer = (ni + 1) * (nj + 1)
        self.m = (k1 - k0) * self.layer
        size = self.m + 3 * self.layer + nj + 2
        real = (self.k2 - k0 + 1) * self.layer  # node layers k0..k2
        first = k0 * self.layer
        index = None if numbers is None else numbers[first:first + real]
        self.p: list[np.ndarray] = []
        for d in range(3):
            x = np.full(size, np.nan)
            if index is None:  # every column kept: the nodes are the full grid's, in its order
                x[:real] = points[first:first + real, d]
            else:
                have = index >= 0
                x[:real][have] = points[index[have], d]
            self.p.append(x)

    def shift(self, offset: tuple[int, int, int]) -> int:
        dk, di, dj = offset
        return dk * self.layer + di * (self.nj + 1) + dj

    def at(self, array: np.ndarray, offset: tuple[int, int, int], count: int | None = None) -> np.ndarray:
        """``count`` positions (default: the slab's cells, ``m``) of ``array`` from ``offset``."""
        s = self.shift(offset)
        return array[s:s + (self.m if count is None else count)]

    def node(self, offset: tuple[int, int, int]) -> list[np.ndarray]:
        """Corner ``offset`` of every cell position, three components."""
        return [self.at(x, offset) for x in self.p]

    def cells(self, values: np.ndarray) -> np.ndarray:
        """Per-position values of the slab's cells -> the mesh's cell order (``keep``)."""
        grid = values[:self.m].reshape(self.k1 - self.k0, self.ni + 1, self.nj + 1)[:, :self.ni, :self.nj]
        return grid.reshape(-1) if self.keep is None else grid[self.keep].reshape(-1)


Slab = TypeVar("Slab", bound=NodeSlab)


def walk(points: np.ndarray, grid: SweepGrid, make: Callable[..., Slab] = NodeSlab) -> Iterator[Slab]:
    """The grid's slabs in cell order, each made by ``make(points, grid, numbers, mask, k0, k1)``
    (``NodeSlab`` or a subclass), with the node numbering and column mask made once."""
    numbers = None if grid.columns is None else grid.node_numbers()
    mask = grid.column_mask()
    for k0, k1 in slabs(grid):
        yield make(points, grid, numbers, mask, k0, k1)


class Chunker:
    """Hands per-cell values over in fresh arrays of ``chunk`` cells, in cell order (the last one
    shorter), as code that measures a block ``chunk`` cells at a time makes them: sums over a
    chunk then round the same way."""

    def __init__(self, chunk: int, take: Callable[[np.ndarray], None]) -> None:
        self.chunk, self.take = chunk, take
        self.pending: list[np.ndarray] = []
        self.held = 0

    def add(self, values: np.ndarray) -> None:
        self.pending.append(values)
        self.held += len(values)
        while self.held >= self.chunk:
            self._hand(self.chunk)

    def finish(self) -> None:
        if self.held:
            self._hand(self.held)

    def _hand(self, count: int) -> None:
        joined = np.concatenate(self.pending)
        self.take(joined[:count].copy())
        rest = joined[count:]
        self.pending, self.held = ([rest], len(rest)) if len(rest) else ([], 0)
