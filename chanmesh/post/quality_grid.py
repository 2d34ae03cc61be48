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
(``sweep_grid.proven_grid``).

Units: lengths in metres; the scaled Jacobian and the edge ratio are dimensionless.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from chanmesh.meshing.grid_slabs import CORNERS, Chunker, NodeSlab, slabs
from chanmesh.meshing.sweep_grid import SweepGrid

_HEX_CORNERS = ((0, 1, 3, 4), (1, 2, 0, 5), (2, 3, 1, 6), (3, 0, 2, 7),
                (4, 7, 5, 0), (5, 4, 6, 1), (6, 5, 7, 2), (7, 6, 4, 3))
"""Corner, then its three edge ends (right-handed): ``post.quality._HEX_CORNERS``."""


def _edge(c: int, n: int) -> tuple[int, tuple[int, int, int], int]:
    """Grid direction (0 along, 1 across, 2 up), base offset and sign of edge c -> n."""
    a, b = CORNERS[c], CORNERS[n]
    axis = next(d for d in range(3) if a[d] != b[d])
    return axis, tuple(min(x, y) for x, y in zip(a, b)), 1 if b[axis] > a[axis] else -1


def _length(v: list[np.ndarray]) -> np.ndarray:
    return np.sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2])


def _det(a: list[np.ndarray], b: list[np.ndarray], c: list[np.ndarray]) -> np.ndarray:
    """det[a, b, c] = (a x b) . c, as ``post.quality._det``."""
    return (a[1] * b[2] - a[2] * b[1]) * c[0] + (a[2] * b[0] - a[0] * b[2]) * c[1] + (a[0] * b[1] - a[1] * b[0]) * c[2]


def _ratio(num: np.ndarray, den: np.ndarray) -> np.ndarray:
    return np.divide(num, den, out=np.zeros_like(num), where=den > 0)


class _Slab(NodeSlab):
    """Cell layers k0..k1 of the grid, with their node layers and one more cell layer when
    there is one (k2 = k1 + 1: its centres, for the faces to the next slab); edge fields made
    once per grid direction (``field``)."""

    def __init__(self, points: np.ndarray, grid: SweepGrid, numbers: np.ndarray | None, k0: int, k1: int) -> None:
        super().__init__(points, grid, numbers, k0, k1, min(k1 + 1, grid.shape[0]))
        self._fields: dict[int, tuple[list[np.ndarray], np.ndarray]] = {}

    def field(self, axis: int) -> tuple[list[np.ndarray], np.ndarray]:
        """Edge vectors of one grid direction (0 along, 1 across, 2 up) at every position from
        which a cell's edge starts, and their lengths."""
        if axis not in self._fields:
            step = self.shift(((1, 0, 0), (0, 1, 0), (0, 0, 1))[axis])
            count = self.m + self.shift((1, 1, 1))
            v = [x[step:step + count] - x[:count] for x in self.p]
            self._fields[axis] = (v, _length(v))
        return self._fields[axis]

    def edge(self, c: int, n: int) -> tuple[list[np.ndarray], np.ndarray, int]:
        """Edge c -> n of every cell: grid edge vectors, lengths and the sign that orients them."""
        axis, base, sign = _edge(c, n)
        v, length = self.field(axis)
        return [self.at(x, base) for x in v], self.at(length, base), sign

    def scaled_jacobian(self) -> np.ndarray:
        out = None
        for c, a, b, d in _HEX_CORNERS:
            (ea, la, sa), (eb, lb, sb), (ed, ld, sd) = self.edge(c, a), self.edge(c, b), self.edge(c, d)
            det = _det(ea, eb, ed)
            if sa * sb * sd < 0:
                np.negative(det, out=det)
            value = _ratio(det, la * lb * ld)
            out = value if out is None else np.minimum(out, value)
        along, across, up = (self.field(axis)[0] for axis in range(3))
        x1 = [self.at(f, (0, 0, 0)) + self.at(f, (1, 0, 0)) + self.at(f, (0, 0, 1)) + self.at(f, (1, 0, 1)) for f in across]
        x2 = [self.at(f, (0, 0, 0)) + self.at(f, (0, 1, 0)) + self.at(f, (0, 0, 1)) + self.at(f, (0, 1, 1)) for f in along]
        x3 = [self.at(f, (0, 0, 0)) + self.at(f, (0, 1, 0)) + self.at(f, (1, 1, 0)) + self.at(f, (1, 0, 0)) for f in up]
        centre = _ratio(_det(x1, x2, x3), _length(x1) * _length(x2) * _length(x3))
        return np.minimum(out, centre)

    def edge_ratio(self) -> np.ndarray:
        lengths = []
        for i, j in _HEX_EDGES:
            axis, base, _ = _edge(i, j)
            lengths.append(self.at(self.field(axis)[1], base))
        longest, shortest = lengths[0].copy(), lengths[0].copy()
        for length in lengths[1:]:
            np.maximum(longest, length, out=longest)
            np.minimum(shortest, length, out=shortest)
        return longest / np.maximum(shortest, np.finfo(float).tiny)

    def node_means(self) -> list[np.ndarray]:
        """Node mean of the cells of layers k0..k2-1, nodes summed in VTK order
        (``post.quality._node_means``), over one layer of positions more than the slab's cells
        (NaN past the last layer of the grid)."""
        out = []
        for x in self.p:
            total = self.at(x, CORNERS[0], self.m + self.layer).copy()
            for corner in CORNERS[1:]:
                total += self.at(x, corner, self.m + self.layer)
            total /= 8
            out.append(total)
        return out

    def smallest_cosine(self, centres: list[np.ndarray], keep: np.ndarray) -> float:
        """Smallest |cos| between an interior face's normal and the line joining its cells'
        centres, over the faces from the slab's cells up, across and along (to layer k1 when
        there is one). ``keep``: (k2 - k0, ni) columns that hold cells."""
        kb, ni, nj = self.k1 - self.k0, self.ni, self.nj
        cell = np.zeros((self.k2 - self.k0, ni + 1, nj + 1), bool)
        cell[:, :ni, :nj] = keep[:, :, None]
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
                cos = _face_cosines(d1, d2, j)
                smallest = min(smallest, float(cos[valid.reshape(-1)].min()))
        return smallest


_HEX_EDGES = ((0, 1), (1, 2), (2, 3), (3, 0), (4, 5), (5, 6), (6, 7), (7, 4), (0, 4), (1, 5), (2, 6), (3, 7))


def _face_cosines(d1: list[np.ndarray], d2: list[np.ndarray], j: list[np.ndarray]) -> np.ndarray:
    """|cos| of the angle between the face normal d1 x d2 and the centre line j
    (``post.quality._largest_angle``'s products and sums, in its order)."""
    n = [d1[1] * d2[2] - d1[2] * d2[1], d1[2] * d2[0] - d1[0] * d2[2], d1[0] * d2[1] - d1[1] * d2[0]]
    dot = n[0] * j[0] + n[1] * j[1] + n[2] * j[2]
    nn = np.sqrt(n[0] * n[0] + n[1] * n[1] + n[2] * n[2])
    jj = np.sqrt(j[0] * j[0] + j[1] * j[1] + j[2] * j[2])
    return np.abs(dot) / (nn * jj)


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
    numbers = None if grid.columns is None else grid.node_numbers()
    mask = grid.column_mask()
    ratio = np.empty(n, np.float32)
    chunks = Chunker(chunk, take_jacobian)
    start, smallest, longest = 0, np.inf, 0.0
    for k0, k1 in slabs(grid):
        slab = _Slab(points, grid, numbers, k0, k1)
        keep = None if grid.columns is None else mask[k0:k1]
        sj = slab.cells(slab.scaled_jacobian(), keep)
        chunks.add(sj)
        stop = start + len(sj)
        er = slab.cells(slab.edge_ratio(), keep)
        if len(er):
            longest = max(longest, float(er.max()))
        ratio[start:stop] = er
        smallest = min(smallest, slab.smallest_cosine(slab.node_means(), mask[k0:slab.k2]))
        start = stop
    chunks.finish()
    if start != n:
        raise ValueError(f"the grid has {start} cells, the mesh {n}")
    angle = 0.0 if smallest == np.inf else float(np.degrees(np.arccos(np.clip(smallest, 0.0, 1.0))))
    return GridFigures(ratio, longest, angle)
