"""Volumes and areas of mesh cells and facets, vectorised (no loop over cells)."""

from __future__ import annotations

import numpy as np

from chanmesh.meshing.grid_slabs import CORNERS, Chunker, walk
from chanmesh.meshing.model import Block, ChannelMesh
from chanmesh.meshing.sweep_grid import SweepGrid, proven_grid

# Hexahedron split into six tetrahedra around the 0-6 diagonal (node order as in VTK/gmsh).
_HEX_TETS = np.array([[0, 1, 2, 6], [0, 2, 3, 6], [0, 3, 7, 6], [0, 7, 4, 6], [0, 4, 5, 6], [0, 5, 1, 6]])
_WEDGE_TETS = np.array([[0, 1, 2, 3], [1, 2, 3, 4], [2, 3, 4, 5]])


def tet_volumes(p: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Signed volumes of tetrahedra (positive for the gmsh/VTK node order)."""
    a, b, c, d = (p[t[:, i]] for i in range(4))
    return np.einsum("ij,ij->i", np.cross(b - a, c - a), d - a) / 6.0


def cell_volumes(points: np.ndarray, block: Block) -> np.ndarray:
    """Volume of each cell of a volume block, m^3 (a hexahedron with non-planar faces is
    measured by its six-tetrahedron split, exact for planar faces)."""
    if block.type == "tetra":
        return tet_volumes(points, block.cells)
    if block.type == "hexahedron":
        return _hex_volumes(points, block.cells)
    table = _HEX_TETS if block.type == "hexahedron" else _WEDGE_TETS
    sub = block.cells[:, table]  # (m, k, 4)
    vols = tet_volumes(points, sub.reshape(-1, 4)).reshape(sub.shape[:2])
    return vols.sum(axis=1)


def _hex_volumes(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    """The six-tetrahedron split of ``_HEX_TETS`` summed in one go: every tetrahedron there is
    (0, a, b, 6) with (a, b) walking the ring 1-2-3-7-4-5-1, so the volume is
    (sum of r_a x r_b) . r_6 / 6 with r = p - p_0 (component rows, no (m, 6, 4) temporary)."""
    p0 = [points[cells[:, 0], d] for d in range(3)]
    r = {k: [points[cells[:, k], d] - p0[d] for d in range(3)] for k in (1, 2, 3, 4, 5, 6, 7)}
    return _ring_volumes(r)


def facet_areas(points: np.ndarray, block: Block) -> np.ndarray:
    """Area of each triangle or quad (quads as two triangles 0-1-2 and 0-2-3)."""
    c = block.cells
    def tri(i: int, j: int, k: int) -> np.ndarray:
        return 0.5 * np.linalg.norm(np.cross(points[c[:, j]] - points[c[:, i]], points[c[:, k]] - points[c[:, i]]), axis=1)
    if block.type == "triangle":
        return tri(0, 1, 2)
    return tri(0, 1, 2) + tri(0, 2, 3)


CHUNK = 1 << 18
"""Cells measured per batch: bounds the temporaries at a few tens of MB."""


def grid_volume_sums(points: np.ndarray, grid: SweepGrid, chunk: int) -> list[float]:
    """Sums of the hexahedron volumes (``_hex_volumes``, the same operations in the same order)
    of each run of ``chunk`` cells in cell order, read off the sweep grid (``grid_slabs``):
    the partial sums ``group_measures`` adds, to the bit."""
    sums: list[float] = []
    chunks = Chunker(chunk, lambda v: sums.append(float(v.sum())))
    for slab in walk(points, grid):
        p0 = slab.node(CORNERS[0])
        r = {k: [x - y for x, y in zip(slab.node(CORNERS[k]), p0)] for k in (1, 2, 3, 4, 5, 6, 7)}
        chunks.add(slab.cells(_ring_volumes(r)))
    chunks.finish()
    return sums


def _ring_volumes(r: dict[int, list[np.ndarray]]) -> np.ndarray:
    """(sum of r_a x r_b over the ring) . r_6 / 6: ``_hex_volumes`` from corner vectors r."""
    ring = (1, 2, 3, 7, 4, 5, 1)
    sx = sy = sz = 0.0
    for a, b in zip(ring[:-1], ring[1:]):
        (ax, ay, az), (bx, by, bz) = r[a], r[b]
        sx = sx + (ay * bz - az * by)
        sy = sy + (az * bx - ax * bz)
        sz = sz + (ax * by - ay * bx)
    x6, y6, z6 = r[6]
    return (sx * x6 + sy * y6 + sz * z6) / 6.0


def group_measures(mesh: ChannelMesh) -> dict[str, float]:
    """Measured volume (dim 3) or area (dim 2) of every group, SI units (cells in batches, no
    copy of a block whose cells all belong to the group; a swept mesh's volumes read off its
    grid when one group holds all its cells)."""
    out: dict[str, float] = {}
    grid = proven_grid(mesh)
    for g in mesh.groups:
        blocks = mesh.volumes if g.dim == 3 else mesh.facets
        if g.dim == 3 and grid is not None and bool(np.all(blocks[0].tags == g.tag)):
            total = 0.0
            for part in grid_volume_sums(mesh.points, grid, CHUNK):
                total += part
            out[g.name] = total
            continue
        measure = cell_volumes if g.dim == 3 else facet_areas
        total = 0.0
        for b in blocks:
            for lo in range(0, len(b.cells), CHUNK):
                cells, tags = b.cells[lo:lo + CHUNK], b.tags[lo:lo + CHUNK]
                mine = tags == g.tag
                if not mine.any():
                    continue
                part = Block(b.type, cells if mine.all() else cells[mine], tags if mine.all() else tags[mine])
                total += float(measure(mesh.points, part).sum())
        out[g.name] = total
    return out
