"""Volumes and areas of mesh cells and facets, vectorised (no loop over cells)."""

from __future__ import annotations

import numpy as np

from chanmesh.meshing.model import Block, ChannelMesh

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
    table = _HEX_TETS if block.type == "hexahedron" else _WEDGE_TETS
    sub = block.cells[:, table]  # (m, k, 4)
    vols = tet_volumes(points, sub.reshape(-1, 4)).reshape(sub.shape[:2])
    return vols.sum(axis=1)


def facet_areas(points: np.ndarray, block: Block) -> np.ndarray:
    """Area of each triangle or quad (quads as two triangles 0-1-2 and 0-2-3)."""
    c = block.cells
    def tri(i: int, j: int, k: int) -> np.ndarray:
        return 0.5 * np.linalg.norm(np.cross(points[c[:, j]] - points[c[:, i]], points[c[:, k]] - points[c[:, i]]), axis=1)
    if block.type == "triangle":
        return tri(0, 1, 2)
    return tri(0, 1, 2) + tri(0, 2, 3)


def group_measures(mesh: ChannelMesh) -> dict[str, float]:
    """Measured volume (dim 3) or area (dim 2) of every group, SI units."""
    out: dict[str, float] = {}
    for g in mesh.groups:
        blocks = mesh.volumes if g.dim == 3 else mesh.facets
        total = 0.0
        for b in blocks:
            sel = Block(b.type, b.cells[b.tags == g.tag], b.tags[b.tags == g.tag])
            if len(sel.cells):
                total += float((cell_volumes(mesh.points, sel) if g.dim == 3 else facet_areas(mesh.points, sel)).sum())
        out[g.name] = total
    return out
