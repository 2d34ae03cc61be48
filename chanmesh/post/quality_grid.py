"""Quality figures of a swept hexahedral mesh read off its grid (``ChannelMesh.sweep``).

Why: the general path (``post.quality``) gathers the eight nodes of every cell and forms its
twelve edges, and gathers the four nodes of every interior face. A swept mesh is a tensor grid
(``meshing.sweep_grid``): neighbouring cells share their nodes and edges, so here every grid
edge is formed once (three fields: along, across, up) and a cell's corners, edges and faces are
slices of a slab of node layers (``meshing.grid_slabs``), with no gathers.

Each figure is made of the same floating-point operations, in the same order, as the general
path, so the figures are identical to the bit (``tests/test_quality_grid.py`` compares the
two). A corner's edge that runs against the grid is the grid edge negated, and negation is
exact, so a corner Jacobian is the grid edges' determinant times the sign of the three; a face
normal from its two diagonals is the same vector, up to an exact sign, whichever corner a face
table starts at. Used only for meshes whose cells were proved to be the grid's
(``sweep_grid.proven_grid``). The arithmetic itself is ``post.quality_kernels``, shared with
the general path.

Units: lengths in metres; the scaled Jacobian and the edge ratio are dimensionless.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from chanmesh.meshing.grid_slabs import CORNERS, Chunker, NodeSlab, walk
from chanmesh.meshing.sweep_grid import SweepGrid
from chanmesh.post.quality_kernels import (
    EDGES, HEX_CORNERS, axes_jacobian, corner_minimum, face_cosines, length, longest_over_shortest, node_mean,
)


def _edge(c: int, n: int) -> tuple[int, tuple[int, int, int], int]:
    """Grid direction (0 along, 1 across, 2 up), base offset and sign of edge c -> n."""
    a, b = CORNERS[c], CORNERS[n]
    axis = next(d for d in range(3) if a[d] != b[d])
    return axis, tuple(min(x, y) for x, y in zip(a, b)), 1 if b[axis] > a[axis] else -1


class _Slab(NodeSlab):
    """Cell layers k0..k1 of the grid, with their node layers and one more cell layer when
    there is one (k2 = k1 + 1: its centres, for the faces to the next slab); edge fields made
    once per grid direction (``field``)."""

    def __init__(self, points: np.ndarray, grid: SweepGrid, numbers: np.ndarray | None, mask: np.ndarray,
                 k0: int, k1: int) -> None:
        super().__init__(points, grid, numbers, mask, k0, k1, min(k1 + 1, grid.shape[0]))
        self._fields: dict[int, tuple[list[np.ndarray], np.ndarray]] = {}

    def field(self, axis: int) -> tuple[list[np.ndarray], np.ndarray]:
        """Edge vectors of one grid direction (0 along, 1 across, 2 up) at every position from
        which a cell's edge starts, and their lengths."""
        if axis not in self._fields:
            step = self.shift(((1, 0, 0), (0, 1, 0), (0, 0, 1))[axis])
            count = self.m + self.shift((1, 1, 1))
            v = [x[step:step + count] - x[:count] for x in self.p]
            self._fields[axis] = (v, length(v))
        return self._fields[axis]

    def edge(self, c: int, n: int) -> tuple[list[np.ndarray], np.ndarray, int]:
        """Edge c -> n of every cell (``quality_kernels.Edge``): grid edge vectors, lengths and
        the sign that orients them."""
        axis, base, sign = _edge(c, n)
        v, size = self.field(axis)
        return [self.at(x, base) for x in v], self.at(size, base), sign

    def scaled_jacobian(self) -> np.ndarray:
        along, across, up = (self.field(axis)[0] for axis in range(3))
        x1 = [self.at(f, (0, 0, 0)) + self.at(f, (1, 0, 0)) + self.at(f, (0, 0, 1)) + self.at(f, (1, 0, 1)) for f in across]
        x2 = [self.at(f, (0, 0, 0)) + self.at(f, (0, 1, 0)) + self.at(f, (0, 0, 1)) + self.at(f, (0, 1, 1)) for f in along]
        x3 = [self.at(f, (0, 0, 0)) + self.at(f, (0, 1, 0)) + self.at(f, (1, 1, 0)) + self.at(f, (1, 0, 0)) for f in up]
        return np.minimum(corner_minimum(self.edge, HEX_CORNERS), axes_jacobian(x1, x2, x3))

    def edge_ratio(self) -> np.ndarray:
        return longest_over_shortest([self.edge(i, j)[1] for i, j in EDGES["hexahedron"]])

    def node_means(self) -> list[np.ndarray]:
        """Node mean of the cells of layers k0..k2-1, nodes summed in VTK order
        (``quality_kernels.node_mean``), over one layer of positions more than the slab's cells
        (NaN past the last layer of the grid)."""
        return [node_mean([self.at(x, corner, self.m + self.layer) for corner in CORNERS]) for x in self.p]

    def smallest_cosine(self, centres: list[np.ndarray]) -> float:
        """Smallest |cos| between an interior face's normal and the line joining its cells'
        centres, over the faces from the slab's cells up, across and along (to layer k1 when
        there is one)."""
        kb, ni, nj = self.k1 - self.k0, self.ni, self.nj
        cell = np.zeros((self.k2 - self.k0, ni + 1, nj + 1), bool)
        cell[:, :ni, :nj] = self.columns[:, :, None]
        faces = (  # first diagonal, second diagonal (corner offsets), step to the next cell, valid
            (((1, 1, 1), (0, 0, 1)), ((1, 0, 1), (0, 1, 1)), (0, 0, 1), cell[:kb] & cell[:kb, :, np.r_[1:nj + 1, 0]] & (np.arange(nj + 1) < nj - 1)),
            (((1, 1, 1), (0, 1, 0)), ((0, 1, 1), (1, 1, 0)), (0, 1, 0), cell[:kb] & np.roll(cell[:kb], -1, axis=1)),
            (((1, 0, 1), (1, 1, 0)), ((1, 1, 1), (1, 0, 0)), (1, 0, 0), cell[:kb] & np.concatenate([cell[1:], np.zeros_like(cell[:1])])[:kb]),
        )
        smallest = np.inf
        with np.errstate(invalid="ignore", divide="ignore"):  # positions without a face
            for (a1, b1), (a2, b2), step, valid in faces:
                if not valid.any():
                    continue
                d1 = [x - y for x, y in zip(self.node(a1), self.node(b1))]
                d2 = [x - y for x, y in zip(self.node(a2), self.node(b2))]
                j = [self.at(c, step) - c[:self.m] for c in centres]
                cos = face_cosines(d1, d2, j)
                smallest = min(smallest, float(cos[valid.reshape(-1)].min()))
        return smallest


@dataclass(frozen=True)
class GridFigures:
    """Figures of a swept mesh: the edge ratio of every cell (cell order) and its maximum, and
    the non-orthogonality. The scaled Jacobian went to the caller in chunks."""

    edge_ratio: np.ndarray  # (m,) float32, as the histograms keep it
    edge_ratio_max: float  # of the float64 ratios
    non_orthogonality: float  # degrees


def grid_figures(points: np.ndarray, grid: SweepGrid, n: int, chunk: int,
                 take_jacobian: Callable[[np.ndarray], None]) -> GridFigures:
    """The scaled Jacobian and edge ratio of every cell and the non-orthogonality (the largest
    angle between an interior face's normal and the line joining the centres of its two cells)
    of the ``n`` cells. The cell centres live only slab by slab. The scaled Jacobians are handed to
    ``take_jacobian`` in fresh arrays of ``chunk`` cells in cell order (the last one shorter),
    as the general path sums them. Identical to the bit to ``post.quality``'s general path."""
    ratio = np.empty(n, np.float32)
    chunks = Chunker(chunk, take_jacobian)
    start, smallest, longest = 0, np.inf, 0.0
    for slab in walk(points, grid, _Slab):
        sj = slab.cells(slab.scaled_jacobian())
        chunks.add(sj)
        stop = start + len(sj)
        er = slab.cells(slab.edge_ratio())
        if len(er):
            longest = max(longest, float(er.max()))
        ratio[start:stop] = er
        smallest = min(smallest, slab.smallest_cosine(slab.node_means()))
        start = stop
    chunks.finish()
    if start != n:
        raise ValueError(f"the grid has {start} cells, the mesh {n}")
    angle = 0.0 if smallest == np.inf else float(np.degrees(np.arccos(np.clip(smallest, 0.0, 1.0))))
    return GridFigures(ratio, longest, angle)
