"""The boundary surface as the 3D picture draws it: every facet of a small mesh, merged
facets of a large one, so that cell edges are drawn at every size.

Why: a mesh of a million cells has some 10^5 boundary facets; drawn one by one their edges
fuse into a dark smear and cost seconds. Instead the nodes are clustered on a grid of cubes
of side ``cube`` (vertex clustering), separately for each group and each dominant facet
normal (+-x, +-y, +-z), so the top and bottom walls, the two side walls and a port and the
wall beside it never merge into each other. A structured quadrilateral surface stays a
quadrilateral surface, only coarser, where its cells are smaller than the cube; cells larger
than the cube are kept as they are. The cube is chosen to leave
at most ``limit`` facets (each group its share, at least ``FEW``). Coordinates stay in the caller's unit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.meshing.model import ChannelMesh

FEW = 300
"""Facets a group keeps at least (all it has, if fewer) when the surface is merged."""


@dataclass(frozen=True)
class DrawingSurface:
    """Facets to draw: ``polygons[name]`` is a list of (n, k) index arrays into ``points``."""

    points: np.ndarray  # (m, 3), the unit the caller gave
    polygons: dict[str, list[np.ndarray]]
    facets_in_mesh: int  # boundary and section facets of the mesh
    cube: float  # side of the clustering cube; 0.0 when every facet is drawn as it is

    @property
    def facets(self) -> int:
        return sum(len(b) for blocks in self.polygons.values() for b in blocks)

    @property
    def merged(self) -> bool:
        return self.cube > 0.0


def surface_groups(mesh: ChannelMesh) -> list[str]:
    """Names of the 2D groups that hold facets, in the mesh's order."""
    return [g.name for g in mesh.groups if g.dim == 2 and any(len(b.cells) for b in mesh.facets_of(g.name))]


def drawing_surface(mesh: ChannelMesh, limit: int, scale: float = 1.0,
                    names: list[str] | None = None, keep: np.ndarray | None = None) -> DrawingSurface:
    """The facets of ``names`` (default: every surface group) to draw, at most ``limit`` of them.

    ``scale`` multiplies the coordinates (1e3 draws in mm). ``keep`` (bool per facet of each
    group block, in the order of ``mesh.facets_of``) restricts the facets first, for close-ups.
    """
    names = surface_groups(mesh) if names is None else names
    points = mesh.points * scale
    blocks: list[tuple[int, np.ndarray]] = []
    i = 0
    for gi, name in enumerate(names):
        for block in mesh.facets_of(name):
            cells = block.cells
            if keep is not None:
                cells = cells[keep[i:i + len(cells)]]
                i += len(block.cells)
            if len(cells):
                blocks.append((gi, cells))
    total = sum(len(c) for _, c in blocks)
    if total <= limit:
        return _compact(points, _by_name(names, blocks), total, 0.0)
    # each group merged on its own, to its share of the limit but never below a few hundred
    # facets, so that a small port or a section face stays visible beside a large wall
    corners = np.concatenate([c.ravel() for _, c in blocks])
    bounds = (points[corners].min(axis=0), points[corners].max(axis=0))
    out: list[tuple[int, np.ndarray]] = []
    parts = [points]
    offset, cube = len(points), 0.0
    for gi in range(len(names)):
        mine = [(g, c) for g, c in blocks if g == gi]
        count = sum(len(c) for _, c in mine)
        share = max(int(limit * count / total), min(count, FEW))
        if count <= share:
            out += mine
            continue
        merged_points, merged, side = _merge(points, mine, share, bounds)
        parts.append(merged_points)
        out += [(g, c + offset) for g, c in merged]
        offset += len(merged_points)
        cube = max(cube, side)
    return _compact(np.concatenate(parts), _by_name(names, out), total, cube)


def _compact(points: np.ndarray, polygons: dict[str, list[np.ndarray]], total: int, cube: float) -> DrawingSurface:
    """The surface carrying only the nodes its polygons use (not every node of the mesh), so
    that drawing projects a surface's worth of points."""
    blocks = [c for cells in polygons.values() for c in cells]
    if not blocks:
        return DrawingSurface(points[:0], polygons, total, cube)
    used = np.unique(np.concatenate([c.ravel() for c in blocks]))
    return DrawingSurface(points[used], {n: [np.searchsorted(used, c) for c in cells] for n, cells in polygons.items()},
                          total, cube)


def _merge(points: np.ndarray, blocks: list[tuple[int, np.ndarray]], limit: int,
           bounds: tuple[np.ndarray, np.ndarray]) -> tuple[np.ndarray, list[tuple[int, np.ndarray]], float]:
    """Cluster with a cube that leaves at most ``limit`` facets: from the mean facet size of
    ``limit`` facets, grown by the excess plus 3 % until the count fits (on channel walls,
    whose cells are already long along the flow, the count falls about as 1/cube)."""
    area = sum(float(_facet_areas(points, c).sum()) for _, c in blocks)
    cube = float(np.sqrt(area / limit))
    while True:
        merged_points, merged = _cluster(points, blocks, cube, bounds)
        count = sum(len(c) for _, c in merged)
        if count <= limit:
            return merged_points, merged, cube
        cube *= 1.03 * count / limit  # one cube holding all leaves nothing, so this ends


def _by_name(names: list[str], blocks: list[tuple[int, np.ndarray]]) -> dict[str, list[np.ndarray]]:
    out: dict[str, list[np.ndarray]] = {n: [] for n in names}
    for gi, cells in blocks:
        out[names[gi]].append(cells)
    return {n: b for n, b in out.items() if b}


def facet_normals(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    """Area-weighted normals (not unit) of triangles or quadrilaterals (diagonal cross product)."""
    p = points[cells]
    if cells.shape[1] == 3:
        return 0.5 * np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    return 0.5 * np.cross(p[:, 2] - p[:, 0], p[:, 3] - p[:, 1])


def _facet_areas(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    return np.linalg.norm(facet_normals(points, cells), axis=1)


def _cluster(points: np.ndarray, blocks: list[tuple[int, np.ndarray]], cube: float,
             bounds: tuple[np.ndarray, np.ndarray]) -> tuple[np.ndarray, list[tuple[int, np.ndarray]]]:
    """Vertex clustering: each corner goes to the cube, group and normal class it lies in.
    ``bounds`` (low and high corner of the surface) fixes the grid of cubes."""
    lo, hi = bounds
    # never coarser than half the chip's height over z: the side walls keep a cell over the
    # height instead of collapsing into lines when the cube outgrows the channel
    height = float(hi[2] - lo[2])
    size = np.array([cube, cube, min(cube, 0.5 * height) if height > 0 else cube])
    span = np.floor((hi - lo) / size).astype(np.int64) + 1
    n_vox = int(span[0] * span[1] * span[2])
    keys, corners, shapes = [], [], []
    for gi, cells in blocks:
        n = facet_normals(points, cells)
        axis = np.argmax(np.abs(n), axis=1)
        sign = n[np.arange(len(n)), axis] > 0
        cls = (gi * 6 + 2 * axis + sign).astype(np.int64)
        voxel = np.floor((points[cells.ravel()] - lo) / size).astype(np.int64)
        vkey = ((voxel[:, 0] * span[1] + voxel[:, 1]) * span[2] + voxel[:, 2]).reshape(cells.shape)
        keys.append((cls[:, None] * n_vox + vkey).ravel())
        corners.append(cells.ravel())
        shapes.append(cells.shape)
    key = np.concatenate(keys)
    corner = np.concatenate(corners)
    unique, inverse = np.unique(key, return_inverse=True)
    merged_points = points[_representatives(points, key // n_vox, corner, inverse, len(unique))]
    out: list[tuple[int, np.ndarray]] = []
    start = 0
    for (gi, _), shape in zip(blocks, shapes):
        ids = inverse[start:start + shape[0] * shape[1]].reshape(shape)
        start += shape[0] * shape[1]
        out += [(gi, c) for c in _collapse(ids)]
    return merged_points, out


def _representatives(points: np.ndarray, cls: np.ndarray, corner: np.ndarray, inverse: np.ndarray,
                     n_clusters: int) -> np.ndarray:
    """One node per cluster: the one on the most group-and-normal classes (a corner before an
    edge before a face node), so the channel's edges and corners stay where they are and
    neighbouring classes meet there; among equals, the node nearest the cluster's mean."""
    width = int(cls.max()) + 1
    pairs = np.unique(corner.astype(np.int64) * width + cls)  # each (node, class) once
    classes = np.bincount(pairs // width, minlength=len(points))[corner]
    count = np.bincount(inverse, minlength=n_clusters).astype(float)
    mean = np.column_stack([np.bincount(inverse, weights=points[corner, d], minlength=n_clusters) / count
                            for d in range(3)])
    distance = np.linalg.norm(points[corner] - mean[inverse], axis=1)
    order = np.lexsort((distance, -classes, inverse))
    first = np.r_[0, np.flatnonzero(np.diff(inverse[order])) + 1]
    return corner[order[first]]


def _collapse(ids: np.ndarray) -> list[np.ndarray]:
    """Polygons with repeated corners reduced: quads with one repeat become triangles, anything
    with fewer than three distinct corners goes; duplicates are drawn once."""
    k = ids.shape[1]
    distinct = ids != np.roll(ids, 1, axis=1)
    n_distinct = distinct.sum(axis=1)
    out = []
    for size in range(3, k + 1):
        rows = ids[n_distinct == size]
        if size < k:
            rows = rows[distinct[n_distinct == size]].reshape(-1, size)
        if len(rows):
            _, first = np.unique(np.sort(rows, axis=1), axis=0, return_index=True)
            out.append(rows[np.sort(first)])
    return out
