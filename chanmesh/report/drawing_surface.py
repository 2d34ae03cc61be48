"""The boundary surface as the 3D picture draws it: every facet of a small mesh, merged
facets of a large one, so that cell edges are drawn at every size.

Why: a mesh of a million cells has some 10^5 boundary facets; drawn one by one their edges
fuse into a dark smear and cost seconds. Instead the nodes are clustered on a grid of cubes
of side ``cube`` (vertex clustering), separately for each group and each dominant facet
normal (+-x, +-y, +-z; a plane group such as a port as one), so the top and bottom walls,
the two side walls and a port and the wall beside it never merge into each other; each
cluster is drawn at its node on the most (group, direction) pairs, so the channel's edges and
the line where a port meets the wall stay straight in both. A structured quadrilateral
surface stays a quadrilateral surface, only coarser, where its cells are smaller than the
cube; cells larger than the cube are kept as they are. The cube is chosen to leave
at most ``limit`` facets (each group its share, at least ``FEW``). Coordinates stay in the caller's unit.

Cost: linear in the surface's facets, numpy only (no Python loop over facets): the surface's
nodes are numbered once, each facet's normal is computed once, the clustering works on the
(node, normal class) pairs of a group (about one per node, found through a table, not a sort
of every corner), a trial cube only counts the facets it would keep, and the clusters are
built once; normals by coordinate columns, each cluster's best node by a minimum over its run
of the sorted keys, a small group's (node, class) tables over its own nodes. About 0.21 s for
the 320,000 facets of a 4 M-hexahedron spiral, 0.37 s before those three (bench/bench_report.py).
A hexahedral mesh that carries its grid is drawn from the grid instead (``grid_surface``), at a
cost independent of its size; this merge serves tetrahedral meshes and any mesh that fails the
grid's checks.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.meshing.model import ChannelMesh

FEW = 300
"""Facets a group keeps at least (all it has, if fewer) when the surface is merged."""

SurfaceFacets = dict[str, list[np.ndarray]]
"""Facets of the surface groups: group name -> (m, k) node-index blocks, the mesh's order."""


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


def surface_facets(mesh: ChannelMesh) -> SurfaceFacets:
    """Each 2D group's facet blocks (those with facets), fetched once: every picture of one
    mesh can share them instead of filtering the mesh's facets by tag again."""
    out: SurfaceFacets = {}
    for g in mesh.groups:
        if g.dim == 2:
            blocks = [b.cells[b.tags == g.tag] for b in mesh.facets]
            blocks = [c for c in blocks if len(c)]
            if blocks:
                out[g.name] = blocks
    return out


def surface_groups(mesh: ChannelMesh) -> list[str]:
    """Names of the 2D groups that hold facets, in the mesh's order."""
    return list(surface_facets(mesh))


@dataclass(frozen=True)
class NumberedSurface:
    """Every surface group's facets renumbered into the surface's own nodes, made once for a
    picture: the main view's merge and the close-ups' facet centres share it, and gathers from
    the surface's nodes are cheaper than from the whole mesh's (a 4 M-hexahedron spiral: 0.3 M
    surface nodes of 4.1 M)."""

    points: np.ndarray  # (m, 3) the surface's nodes, mesh unit, in mesh node order
    blocks: list[tuple[int, np.ndarray]]  # (group index in surface_facets' order, block in local numbers)


def numbered_surface(mesh: ChannelMesh, facets: SurfaceFacets | None = None) -> NumberedSurface:
    """The surface groups' facets (``facets``: ``surface_facets(mesh)`` if at hand) over the
    surface's own nodes."""
    facets = surface_facets(mesh) if facets is None else facets
    nodes, blocks = _numbered(len(mesh.points), [(gi, c) for gi, blocks in enumerate(facets.values()) for c in blocks])
    return NumberedSurface(mesh.points[nodes], blocks)


def drawing_surface(mesh: ChannelMesh, limit: int, scale: float = 1.0, names: list[str] | None = None,
                    keep: np.ndarray | None = None, facets: SurfaceFacets | None = None,
                    numbered: NumberedSurface | None = None) -> DrawingSurface:
    """The facets of ``names`` (default: every surface group) to draw, at most ``limit`` of them.

    ``scale`` multiplies the coordinates (1e3 draws in mm). ``keep`` (bool per facet of each
    group block, in the order of ``surface_facets``) restricts the facets first, for close-ups.
    ``facets``: ``surface_facets(mesh)`` and ``numbered``: ``numbered_surface(mesh, facets)``,
    when several pictures share them (``numbered`` serves the whole surface: no ``names``, no ``keep``).
    """
    facets = surface_facets(mesh) if facets is None else facets
    names = list(facets) if names is None else names
    if numbered is not None and keep is None and names == list(facets):
        points, blocks = numbered.points, numbered.blocks
        total = sum(len(c) for _, c in blocks)
    else:
        blocks = []
        i = 0
        for gi, name in enumerate(names):
            for cells in facets.get(name, []):
                if keep is not None:
                    i, cells = i + len(cells), cells[keep[i:i + len(cells)]]
                if len(cells):
                    blocks.append((gi, cells))
        return blocks_surface(mesh.points, names, blocks, limit, scale)
    return _drawn(points, names, blocks, total, limit, scale)


def blocks_surface(points: np.ndarray, names: list[str], blocks: list[tuple[int, np.ndarray]], limit: int,
                   scale: float = 1.0) -> DrawingSurface:
    """The facets ``blocks`` ((index into ``names``, (m, k) cells into ``points``) pairs) to
    draw, at most ``limit`` of them, merged as ``drawing_surface`` merges: the same surface
    for facets chosen some other way (a close-up read off a swept mesh's grid)."""
    total = sum(len(c) for _, c in blocks)
    nodes, blocks = _numbered(len(points), blocks)
    return _drawn(points[nodes], names, blocks, total, limit, scale)  # the surface's own nodes


def _drawn(points: np.ndarray, names: list[str], blocks: list[tuple[int, np.ndarray]], total: int, limit: int,
           scale: float) -> DrawingSurface:
    """``blocks`` over the surface's own ``points`` (mesh unit), merged if more than ``limit``."""
    if total <= limit:
        return DrawingSurface(points * scale, _by_name(names, blocks), total, 0.0)
    # each group merged on its own, to its share of the limit but never below a few hundred
    # facets, so that a small port or a section face stays visible beside a large wall
    bounds = (points.min(axis=0), points.max(axis=0))
    normals = [facet_normals(points, c) for _, c in blocks]  # once per facet: classes, ranks, areas
    areas = [float(_lengths(n).sum()) for n in normals]
    classes: list[np.ndarray] = [np.empty(0, dtype=np.int64)] * len(blocks)
    for gi in range(len(names)):
        mine = [i for i, (g, _) in enumerate(blocks) if g == gi]
        for i, k in zip(mine, _group_classes([normals[i] for i in mine], sum(areas[i] for i in mine)), strict=True):
            classes[i] = k
    rank = _surface_rank(len(points), [(g, c, k) for (g, c), k in zip(blocks, classes, strict=True)], len(names))
    out: list[tuple[int, np.ndarray]] = []
    cube = 0.0
    for gi in range(len(names)):
        mine = [(c, k) for (g, c), k in zip(blocks, classes, strict=True) if g == gi]
        area = sum(a for (g, _), a in zip(blocks, areas, strict=True) if g == gi)
        count = sum(len(c) for c, _ in mine)
        share = group_share(count, total, limit)
        if count <= share:
            out += [(gi, c) for c, _ in mine]
            continue
        merged, side = _merge(points, mine, area, rank, share, bounds)
        out += [(gi, c) for c in merged]
        cube = max(cube, side)
    used, out = _numbered(len(points), out)  # only the nodes the merged polygons use
    return DrawingSurface(points[used] * scale, _by_name(names, out), total, cube * scale)


def group_share(count: int, total: int, limit: int) -> int:
    """Facets a group of ``count`` may keep when a surface of ``total`` is drawn with at most
    ``limit``: its share of the limit, but never below ``FEW`` (all it has, if fewer)."""
    return max(int(limit * count / total), min(count, FEW))


def _numbered(n_points: int, blocks: list[tuple[int, np.ndarray]]) -> tuple[np.ndarray, list[tuple[int, np.ndarray]]]:
    """The nodes the blocks use (sorted) and the blocks renumbered into them: a table over all
    ``n_points`` when the blocks touch many of them, a sort when they are few."""
    if not blocks:
        return np.zeros(0, dtype=np.int64), []
    flat = np.concatenate([c.ravel() for _, c in blocks])
    if len(flat) * 8 < n_points:
        used, inverse = np.unique(flat, return_inverse=True)
        renumbered, start = [], 0
        for g, c in blocks:
            renumbered.append((g, inverse[start:start + c.size].reshape(c.shape)))
            start += c.size
        return used, renumbered
    mark = np.zeros(n_points, dtype=bool)
    mark[flat] = True
    used = np.flatnonzero(mark)
    local = np.empty(n_points, dtype=np.int64)
    local[used] = np.arange(len(used))
    return used, [(g, local[c]) for g, c in blocks]


def _by_name(names: list[str], blocks: list[tuple[int, np.ndarray]]) -> dict[str, list[np.ndarray]]:
    out: dict[str, list[np.ndarray]] = {n: [] for n in names}
    for gi, cells in blocks:
        out[names[gi]].append(cells)
    return {n: b for n, b in out.items() if b}


def facet_normals(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    """Area-weighted normals (not unit) of triangles or quadrilaterals (diagonal cross product).

    Coordinate by coordinate (gathers of one column, the cross product's terms written out):
    the same numbers as ``np.cross`` of the gathered corners at less than half its time."""
    x, y, z = points[:, 0], points[:, 1], points[:, 2]
    if cells.shape[1] == 3:
        head_a, tail_a, head_b, tail_b = cells[:, 1], cells[:, 0], cells[:, 2], cells[:, 0]
    else:
        head_a, tail_a, head_b, tail_b = cells[:, 2], cells[:, 0], cells[:, 3], cells[:, 1]
    ax, ay, az = x[head_a] - x[tail_a], y[head_a] - y[tail_a], z[head_a] - z[tail_a]
    bx, by, bz = x[head_b] - x[tail_b], y[head_b] - y[tail_b], z[head_b] - z[tail_b]
    out = np.empty((len(cells), 3))
    np.multiply(ay * bz - az * by, 0.5, out=out[:, 0])
    np.multiply(az * bx - ax * bz, 0.5, out=out[:, 1])
    np.multiply(ax * by - ay * bx, 0.5, out=out[:, 2])
    return out


def _facet_areas(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    return _lengths(facet_normals(points, cells))


def _lengths(v: np.ndarray) -> np.ndarray:
    """Row lengths of (n, 3) vectors, column by column (a reduction over an axis of three is slow)."""
    return np.sqrt(v[:, 0] * v[:, 0] + v[:, 1] * v[:, 1] + v[:, 2] * v[:, 2])


def _group_classes(normals: list[np.ndarray], area: float) -> list[np.ndarray]:
    """Normal class of each facet of one group (``normals``: its blocks' area vectors, ``area``
    their lengths' sum): each facet's own, but one class for a plane group (a port, a section:
    its area vectors sum to its area). A plane turned 45 degrees between two axes would
    otherwise split along rounding noise into two classes, merged apart, with gaps between."""
    total = sum((n.sum(axis=0) for n in normals), np.zeros(3))
    if len(normals) and float(np.linalg.norm(total)) >= (1.0 - 1e-9) * area > 0.0:
        one = _normal_classes(total[None, :])[0]
        return [np.full(len(n), one, dtype=np.int64) for n in normals]
    return [_normal_classes(n) for n in normals]


def _surface_rank(n_points: int, blocks: list[tuple[int, np.ndarray, np.ndarray]], n_groups: int) -> np.ndarray:
    """Per node of the surface, the (group, normal class) pairs it lies on, summed over every
    group: 1 inside a flat stretch of one group, 2 on an edge of the channel or on the line
    where two groups meet (a port's outline on the wall), 3 at a corner. ``blocks``: (group,
    cells, class of each cell). Counting the other groups too keeps a merged port's outline,
    and the wall's beside it, on that line: a group's own classes alone would rank its
    outline like its inside and let clusters pull it in, notching the port."""
    rank = np.zeros(n_points, dtype=np.int8)
    for gi in range(n_groups):
        slots = [c * 6 + k[:, None] for g, c, k in blocks if g == gi]
        if not slots:
            continue
        flat = np.concatenate([s.ravel() for s in slots])
        if len(flat) * 8 < n_points:  # a small group (a port): its own slots, sorted
            nodes, counts = np.unique(np.unique(flat) // 6, return_counts=True)
            rank[nodes] += counts.astype(np.int8)
        else:  # a table over (node, class) slots, as _pairs builds
            has = np.zeros(6 * n_points, dtype=bool)
            has[flat] = True
            six = has.reshape(-1, 6)
            rank += sum(six[:, j].astype(np.int8) for j in range(6))
    return rank


def _normal_classes(n: np.ndarray) -> np.ndarray:
    """Class 0..5 of each normal: its dominant axis (the first of equals) and its sign."""
    a = np.abs(n)
    axis = np.where((a[:, 0] >= a[:, 1]) & (a[:, 0] >= a[:, 2]), 0, np.where(a[:, 1] >= a[:, 2], 1, 2))
    return 2 * axis + (n[np.arange(len(n)), axis] > 0)


@dataclass(frozen=True)
class _Pairs:
    """One group's (node, normal class) pairs: each facet corner points at the pair of its node
    and its facet's class (dominant normal axis and sign, 0..5)."""

    node: np.ndarray  # (P,) node of each pair
    cls: np.ndarray  # (P,) class of each pair
    rank: np.ndarray  # (P,) (group, class) pairs of the whole surface at the pair's node (_surface_rank)
    corners: list[np.ndarray]  # per block, (m, k) pair index of each corner
    area: float  # the group's area


def _pairs(n_points: int, blocks: list[tuple[np.ndarray, np.ndarray]], area: float, rank: np.ndarray) -> _Pairs:
    """The pairs of ``blocks`` ((cells, class of each cell); ``area`` theirs) by a table over
    (node, class) slots (no sort); ``rank`` per node (``_surface_rank``)."""
    slots = [c * 6 + k[:, None] for c, k in blocks]
    has = np.zeros(6 * n_points, dtype=bool)
    for s in slots:
        has[s.ravel()] = True
    pairs = np.flatnonzero(has)
    index = np.empty(len(has), dtype=np.int64)  # pair number of each used slot (others never read)
    index[pairs] = np.arange(len(pairs))
    return _Pairs(pairs // 6, pairs % 6, rank[pairs // 6], [index[s] for s in slots], area)


def _merge(points: np.ndarray, blocks: list[tuple[np.ndarray, np.ndarray]], area: float, rank: np.ndarray,
           limit: int, bounds: tuple[np.ndarray, np.ndarray]) -> tuple[list[np.ndarray], float]:
    """Cluster with a cube that leaves at most ``limit`` facets: from the mean facet size of
    ``limit`` facets, grown by the excess plus 3 % until the count fits (on channel walls,
    whose cells are already long along the flow, the count falls about as 1/cube). Each trial
    only counts the facets left with three distinct clusters (an upper bound: duplicates are
    dropped later); the clusters are built once, at the cube that fits."""
    used = None
    if sum(c.size for c, _ in blocks) < len(points):  # a small group (a port): tables over its own nodes only
        used, numbered = _numbered(len(points), [(0, c) for c, _ in blocks])
        points, rank = points[used], rank[used]
        blocks = [(c, k) for (_, c), (_, k) in zip(numbered, blocks, strict=True)]
    pairs = _pairs(len(points), blocks, area, rank)
    cube = float(np.sqrt(pairs.area / limit))
    while True:
        key = _cluster_keys(points, pairs, cube, bounds)
        count = sum(int((_distinct_corners(key[c]) >= 3).sum()) for c in pairs.corners)
        if count <= limit:
            merged = _cluster(points, pairs, key)
            return (merged if used is None else [used[c] for c in merged]), cube
        cube *= 1.03 * count / limit  # one cube holding all leaves nothing, so this ends


def _cluster_keys(points: np.ndarray, pairs: _Pairs, cube: float, bounds: tuple[np.ndarray, np.ndarray]) -> np.ndarray:
    """The cluster of each pair as one integer: its class and the cube it lies in. ``bounds``
    (low and high corner of the surface) fixes the grid of cubes."""
    lo, hi = bounds
    # never coarser than half the chip's height over z: the side walls keep a cell over the
    # height instead of collapsing into lines when the cube outgrows the channel
    height = float(hi[2] - lo[2])
    size = np.array([cube, cube, min(cube, 0.5 * height) if height > 0 else cube])
    span = np.floor((hi - lo) / size).astype(np.int64) + 1
    voxel = np.floor((points[pairs.node] - lo) / size).astype(np.int64)
    return ((pairs.cls * span[0] + voxel[:, 0]) * span[1] + voxel[:, 1]) * span[2] + voxel[:, 2]


def _cluster(points: np.ndarray, pairs: _Pairs, key: np.ndarray) -> list[np.ndarray]:
    """Vertex clustering: each pair goes to the cluster of its ``key``, and each facet corner
    to its cluster's representative node."""
    order = np.argsort(key)  # np.unique's own sort, kept to reduce over each cluster's run
    ordered = key[order]
    first = np.empty(len(key), dtype=bool)
    first[:1] = True
    np.not_equal(ordered[1:], ordered[:-1], out=first[1:])
    inverse = np.empty(len(key), dtype=np.int64)
    inverse[order] = np.cumsum(first) - 1  # the cluster of each pair, as np.unique numbers them
    node = pairs.node[_representatives(points[pairs.node], pairs.rank, inverse, order, np.flatnonzero(first))]
    return [r for c in pairs.corners for r in _collapse(node[inverse[c]])]


def _distinct_corners(ids: np.ndarray) -> np.ndarray:
    """Corners of each polygon that differ from the one before (a column sum: faster than
    ``.sum(axis=1)`` over k columns)."""
    return sum((ids[:, j] != ids[:, j - 1]).astype(np.int8) for j in range(ids.shape[1]))


def _representatives(at: np.ndarray, rank: np.ndarray, inverse: np.ndarray, order: np.ndarray,
                     starts: np.ndarray) -> np.ndarray:
    """One pair per cluster: the one whose node lies on the most (group, class) pairs of the
    surface (a corner before an edge or a port's outline before a face node), so the channel's
    edges and corners and the lines where groups meet stay where they are and neighbouring
    classes and groups meet there; among equals, the node nearest the cluster's mean
    (a minimum over each cluster's run of ``order``, the pairs sorted by cluster, which
    starts at ``starts``)."""
    n_clusters = len(starts)
    count = np.bincount(inverse, minlength=n_clusters).astype(float)
    mean = np.column_stack([np.bincount(inverse, weights=at[:, d], minlength=n_clusters) / count for d in range(3)])
    distance = _lengths(at - mean[inverse])
    score = distance / (2.0 * max(float(distance.max()), 1e-300)) - rank  # rank first, then distance below 1/2
    best = np.minimum.reduceat(score[order], starts)  # np.minimum.at was 3x slower
    winner = np.flatnonzero(score == best[inverse])
    chosen = np.empty(n_clusters, dtype=np.int64)
    chosen[inverse[winner[::-1]]] = winner[::-1]  # among exact ties the first pair, as a stable sort gives
    return chosen


def _collapse(ids: np.ndarray) -> list[np.ndarray]:
    """Polygons with repeated corners reduced: quads with one repeat become triangles, anything
    with fewer than three distinct corners goes; duplicates are drawn once."""
    k = ids.shape[1]
    distinct = np.empty(ids.shape, dtype=bool)
    for j in range(k):  # each corner against the one before it, column by column (np.roll copies)
        np.not_equal(ids[:, j], ids[:, j - 1], out=distinct[:, j])
    n_distinct = sum(distinct[:, j].astype(np.int8) for j in range(k))
    out = []
    for size in range(3, k + 1):
        rows = ids[n_distinct == size]
        if size < k:
            rows = rows[distinct[n_distinct == size]].reshape(-1, size)
        if len(rows):
            _, first = np.unique(np.sort(rows, axis=1), axis=0, return_index=True)
            out.append(rows[np.sort(first)])
    return out
