"""The arithmetic of the quality figures, shared by the general path (``post.quality``, cells
gathered) and the sweep-grid path (``post.quality_grid``, cells as slices of node layers).

Why one module: the two paths promise the same figures to the bit, so every product and sum
must be made the same way, in the same order, in both; written once here, they cannot drift
apart. Arrays are component rows (a vector is a list or array of its three components, each
of any shape); lengths in the mesh's unit (metres), ratios dimensionless. Definitions (VTK's
vtkMeshQuality, the Verdict library, Stimpson et al. 2007) in ``post.quality``.
"""

from __future__ import annotations

from typing import Callable, Sequence

import numpy as np

HEX_CORNERS = ((0, 1, 3, 4), (1, 2, 0, 5), (2, 3, 1, 6), (3, 0, 2, 7),
               (4, 7, 5, 0), (5, 4, 6, 1), (6, 5, 7, 2), (7, 6, 4, 3))
"""Hexahedron (VTK order): each corner, then its three edge ends (right-handed)."""

WEDGE_CORNERS = ((0, 1, 2, 3), (1, 2, 0, 4), (2, 0, 1, 5), (3, 5, 4, 0), (4, 3, 5, 1), (5, 4, 3, 2))
"""Wedge (VTK order): each corner, then its three edge ends."""

EDGES = {
    "tetra": ((0, 1), (1, 2), (2, 0), (0, 3), (1, 3), (2, 3)),
    "hexahedron": ((0, 1), (1, 2), (2, 3), (3, 0), (4, 5), (5, 6), (6, 7), (7, 4), (0, 4), (1, 5), (2, 6), (3, 7)),
    "wedge": ((0, 1), (1, 2), (2, 0), (3, 4), (4, 5), (5, 3), (0, 3), (1, 4), (2, 5)),
}
"""The edges of each cell type, as pairs of its nodes."""

Edge = Callable[[int, int], tuple[Sequence[np.ndarray], np.ndarray, int]]
"""edge(i, j) -> (vector, length, sign): the edge from node i to node j is ``sign`` times
``vector`` (sign -1 when the vector at hand runs the other way: negation is exact)."""


def length(v: Sequence[np.ndarray]) -> np.ndarray:
    return np.sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2])


def det(a: Sequence[np.ndarray], b: Sequence[np.ndarray], c: Sequence[np.ndarray]) -> np.ndarray:
    """det[a, b, c] = (a x b) . c."""
    return (a[1] * b[2] - a[2] * b[1]) * c[0] + (a[2] * b[0] - a[0] * b[2]) * c[1] + (a[0] * b[1] - a[1] * b[0]) * c[2]


def ratio(num: np.ndarray, den: np.ndarray) -> np.ndarray:
    """num / den, 0 where den is not positive."""
    return np.divide(num, den, out=np.zeros_like(num), where=den > 0)


def corner_minimum(edge: Edge, table: Sequence[Sequence[int]]) -> np.ndarray:
    """The smallest normalised corner Jacobian det[e1, e2, e3] / (|e1||e2||e3|) over the corners
    of ``table`` (corner, then its three edge ends). det is odd in each vector, so an edge
    given reversed flips the determinant's sign, exactly."""
    out = None
    for c, a, b, d in table:
        (ea, la, sa), (eb, lb, sb), (ed, ld, sd) = edge(c, a), edge(c, b), edge(c, d)
        jac = det(ea, eb, ed)
        if sa * sb * sd < 0:
            np.negative(jac, out=jac)
        value = ratio(jac, la * lb * ld)
        out = value if out is None else np.minimum(out, value)
    return out


def axes_jacobian(x1: Sequence[np.ndarray], x2: Sequence[np.ndarray], x3: Sequence[np.ndarray]) -> np.ndarray:
    """A hexahedron's normalised Jacobian at its centre from its principal axes (Verdict's
    calc_hex_efg 1, 2, 3)."""
    return ratio(det(x1, x2, x3), length(x1) * length(x2) * length(x3))


def longest_over_shortest(lengths: Sequence[np.ndarray]) -> np.ndarray:
    """The edge ratio from a cell type's edge lengths (pairwise, in place: max and min are exact)."""
    longest, shortest = lengths[0].copy(), lengths[0].copy()
    for each in lengths[1:]:
        np.maximum(longest, each, out=longest)
        np.minimum(shortest, each, out=shortest)
    return longest / np.maximum(shortest, np.finfo(float).tiny)


def node_mean(nodes: Sequence[np.ndarray]) -> np.ndarray:
    """The mean of ``nodes`` summed in the order given, then divided (the order numpy's
    ``points[cells].mean(axis=1)`` sums in)."""
    total = nodes[0].copy()
    for x in nodes[1:]:
        total += x
    total /= len(nodes)
    return total


def face_cosines(d1: Sequence[np.ndarray], d2: Sequence[np.ndarray], j: Sequence[np.ndarray]) -> np.ndarray:
    """|cos| of the angle between a face's normal d1 x d2 and the line j joining its two cells'
    centres: the products and sums of ``np.cross``, ``np.linalg.norm`` and ``einsum`` on (m, 3)
    rows, in their order."""
    n = [d1[1] * d2[2] - d1[2] * d2[1], d1[2] * d2[0] - d1[0] * d2[2], d1[0] * d2[1] - d1[1] * d2[0]]
    dot = n[0] * j[0] + n[1] * j[1] + n[2] * j[2]
    return np.abs(dot) / (length(n) * length(j))
