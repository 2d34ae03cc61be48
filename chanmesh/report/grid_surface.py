"""The drawing surface of a swept hexahedral mesh, read off its grid (``ChannelMesh.sweep``).

Why: merging every boundary facet (``drawing_surface``) costs time in proportion to the
surface (about 0.3 s for the 320,000 facets of a 4 M-hexahedron spiral). A swept mesh's
boundary is the boundary of its tensor grid (``SweepGrid``), so a coarser surface is the
boundary of the grid on a subset of its node lines: about one line per ``step`` of length
along, across and up (never fewer than three lines up: the side walls keep two cells over the
height, as the merge keeps them), always with the two ends, the lines where the kept columns
change (chamber walls) and the edges of every port and section. Each port and section is
drawn on its own lines, to its own share of the facets (``group_share``), so a small port
keeps its cells beside a long wall. Its nodes are mesh nodes, so the surface drawn lies on the
mesh's; a coarse quad is the chord of the cells it covers. A close-up reads every cell of a
few layers at the port's end of the grid. Cost: in proportion to the lines and to the facets
drawn, not to the mesh.

The grid is trusted after cheap checks, else ``grid_surface`` returns None and the picture
merges the facets as for tetrahedra: the node count is the grid's; 1,024 cells spread over the
mesh have the grid's corners; each group other than the wall is a full rectangle of one node
layer; the wall and the ports hold exactly the grid's boundary faces.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from chanmesh.meshing.hex import boundary_quads, open_sides
from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.sweep_grid import SweepGrid
from chanmesh.report.drawing_surface import DrawingSurface, blocks_surface, group_share

WALL = "wall"
CHECKED_CELLS = 1024
"""Cells, spread evenly over the mesh, compared with the grid's corners before it is trusted."""

# corner offsets (along, across, up) of the VTK hexahedron, as SweepGrid.node_offsets numbers them
_CORNERS = np.array([(0, 0, 0), (0, 1, 0), (1, 1, 0), (1, 0, 0), (0, 0, 1), (0, 1, 1), (1, 1, 1), (1, 0, 1)])


@dataclass(frozen=True)
class Plane:
    """A group that is a full rectangle of one node layer: layer ``k``, node lines ``i0..i1``
    across and ``j0..j1`` up. ``outlet``: its quads face +t (the hexahedra's k+ order)."""

    k: int
    i0: int
    i1: int
    j0: int
    j1: int
    outlet: bool


@dataclass(frozen=True)
class GridSurface:
    """A swept mesh's surface described by its grid, checked against the mesh."""

    grid: SweepGrid
    rank: np.ndarray  # (nk + 1, ni + 1) mesh node column of each grid node column, -1 where absent
    counts: dict[str, int]  # facets of each surface group that has some, the mesh's order
    planes: dict[str, Plane]  # every surface group but the wall
    along: np.ndarray  # (nk + 1,) position of each node layer along the channel, m (chords)
    across: np.ndarray  # (ni + 1,) position of each node line across, m
    up: np.ndarray  # (nj + 1,) position of each node line up, m

    def table(self, k: np.ndarray, i: np.ndarray, j: np.ndarray) -> np.ndarray:
        """Mesh node numbers of the grid nodes on lines ``k`` x ``i`` x ``j``, (len k, len i, len j)."""
        return (self.rank[np.ix_(k, i)] * (self.grid.shape[2] + 1))[:, :, None] + j[None, None, :]


def grid_surface(mesh: ChannelMesh) -> GridSurface | None:
    """The mesh's surface as its grid gives it, or None when the mesh carries no grid or does
    not pass the checks (see the module's docstring)."""
    grid = mesh.sweep
    if grid is None or len(mesh.volumes) != 1 or mesh.volumes[0].type != "hexahedron":
        return None
    nk, ni, nj = grid.shape
    mask = grid.column_mask()
    used = np.zeros((nk + 1, ni + 1), bool)  # node columns touched by a kept cell column
    for dk in (0, 1):
        for di in (0, 1):
            used[dk:nk + dk, di:ni + di] |= mask
    rank = np.where(used, np.cumsum(used).reshape(used.shape) - 1, -1)
    cells = mesh.volumes[0].cells
    if len(mesh.points) != int(used.sum()) * (nj + 1) or len(cells) != int(mask.sum()) * nj:
        return None
    pick = np.unique(np.linspace(0, len(cells) - 1, CHECKED_CELLS).astype(np.int64))
    k, i = np.divmod(np.flatnonzero(mask)[pick // nj], ni)
    j = pick % nj
    expect = rank[k[:, None] + _CORNERS[:, 0], i[:, None] + _CORNERS[:, 1]] * (nj + 1) + j[:, None] + _CORNERS[:, 2]
    if not np.array_equal(expect, cells[pick]):
        return None
    planes = _planes(mesh, rank, nk)
    if planes is None:
        return None
    counts, planes = planes
    if not _boundary_is_the_grids(mask, nj, counts, planes):
        return None
    i_ref = np.flatnonzero((rank >= 0).all(axis=0))  # node columns present at every layer
    k_ref = np.flatnonzero((rank >= 0).all(axis=1))  # layers with every node column
    if not len(i_ref) or not len(k_ref):
        return None
    i_mid, k_full = int(i_ref[len(i_ref) // 2]), int(k_ref[0])
    p = mesh.points
    return GridSurface(grid, rank, counts, planes,
                       _chords(p[rank[:, i_mid] * (nj + 1)]),
                       _chords(p[rank[k_full, :] * (nj + 1)]),
                       _chords(p[rank[k_full, i_mid] * (nj + 1) + np.arange(nj + 1)]))


def _chords(points: np.ndarray) -> np.ndarray:
    """Cumulative length of the polyline through ``points`` (n, 3), from 0."""
    step = np.diff(points, axis=0)
    return np.concatenate([[0.0], np.cumsum(np.sqrt((step * step).sum(axis=1)))])


def _planes(mesh: ChannelMesh, rank: np.ndarray, nk: int) -> tuple[dict[str, int], dict[str, Plane]] | None:
    """Facet counts of the surface groups and, for each but the wall, the rectangle of one node
    layer it fills; None if a group is not such a rectangle or there is no wall."""
    nj = mesh.sweep.shape[2]  # type: ignore[union-attr]
    counts: dict[str, int] = {}
    tally = [np.bincount(b.tags) for b in mesh.facets]
    for g in mesh.groups:
        if g.dim == 2:
            n = sum(int(t[g.tag]) for t in tally if len(t) > g.tag)
            if n:
                counts[g.name] = n
    if WALL not in counts or any(b.type != "quad" for b in mesh.facets):
        return None
    column_of = np.flatnonzero(rank.reshape(-1) >= 0)  # mesh node column -> grid node column
    planes: dict[str, Plane] = {}
    for g in mesh.groups:
        if g.name not in counts or g.name == WALL:
            continue
        nodes = np.unique(np.concatenate([b.cells[b.tags == g.tag].ravel() for b in mesh.facets]))
        k, i = np.divmod(column_of[nodes // (nj + 1)], rank.shape[1])
        j = nodes % (nj + 1)
        box = Plane(int(k[0]), int(i.min()), int(i.max()), int(j.min()), int(j.max()), int(k[0]) == nk)
        if (k != box.k).any() or counts[g.name] != (box.i1 - box.i0) * (box.j1 - box.j0) \
                or (g.name.startswith(("inlet", "outlet")) and box.k not in (0, nk)):
            return None
        planes[g.name] = box
    return counts, planes


def _open_sides(mask: np.ndarray) -> tuple[int, int]:
    """Side faces of the kept columns that no kept column covers: (across and along the
    channel's inside, at the two ends), as counts of columns."""
    sides = sum(int(cols.sum()) for cols in open_sides(mask).values())
    ends = int(mask[0].sum() + mask[-1].sum())
    return sides - ends, ends


def _boundary_is_the_grids(mask: np.ndarray, nj: int, counts: dict[str, int], planes: dict[str, Plane]) -> bool:
    """The wall and the ports hold exactly as many facets as the grid's boundary faces."""
    inside, ends = _open_sides(mask)
    nk = mask.shape[0]
    ports = sum(counts[n] for n, p in planes.items() if p.k in (0, nk))
    return counts[WALL] == 2 * int(mask.sum()) + nj * inside and ports == nj * ends


def _lines(x: np.ndarray, step: float, must: np.ndarray) -> np.ndarray:
    """Indices of node lines about ``step`` apart by their positions ``x`` (increasing): the
    first line in each ``step`` along, then ``must`` (and both ends), dropping lines closer
    than half a step to a ``must`` line."""
    must = np.unique(np.concatenate([[0, len(x) - 1], np.asarray(must, dtype=np.int64)]))
    bins = np.floor((x - x[0]) / step)
    candidates = np.flatnonzero(bins[1:] != bins[:-1]) + 1
    at = x[must]
    slot = np.clip(np.searchsorted(at, x[candidates]), 1, len(at) - 1)
    gap = np.minimum(np.abs(x[candidates] - at[slot - 1]), np.abs(at[slot] - x[candidates]))
    return np.union1d(must, candidates[gap >= 0.5 * step])


def _quads(base: np.ndarray, outlet: bool) -> np.ndarray:
    """The quads of a node rectangle ``base`` (lines across, lines up) of mesh node numbers, in
    the hexahedra's k- order (k+ for an outlet), across-major as the mesher lists them."""
    a, b, c, d = base[:-1, :-1], base[1:, :-1], base[1:, 1:], base[:-1, 1:]
    corners = (b, a, d, c) if outlet else (a, b, c, d)
    return np.stack([x.reshape(-1) for x in corners], axis=1)


def plane_quads(surface: GridSurface, name: str, across: np.ndarray | None = None,
                up: np.ndarray | None = None) -> np.ndarray:
    """The quads (m, 4) of a port or section on its node lines ``across`` and ``up`` (default:
    every line of its rectangle), mesh node numbers."""
    p = surface.planes[name]
    across = np.arange(p.i0, p.i1 + 1) if across is None else across
    up = np.arange(p.j0, p.j1 + 1) if up is None else up
    return _quads(surface.table(np.array([p.k]), across, up)[0], p.outlet)


def wall_quads(surface: GridSurface, along: np.ndarray, across: np.ndarray, up: np.ndarray) -> np.ndarray:
    """The wall quads (m, 4, mesh node numbers) of the grid on node lines ``along`` x ``across``
    x ``up``: the boundary of that coarser grid without its two end layers, except where the
    fine grid has no column beyond an end (a chamber's wall across the flow)."""
    mask = surface.grid.column_mask()
    sub = mask[np.ix_(along[:-1], across[:-1])]  # uniform over each coarse column (lines include the changes)
    coarse = SweepGrid((len(along) - 1, len(across) - 1, len(up) - 1), None if sub.all() else sub)
    faces = boundary_quads(coarse)
    out = list(faces["wall"])
    n_up, n_across, nk = len(up), len(across), mask.shape[0]
    for end, beyond in (("inlet", along[0] - 1), ("outlet", along[-1])):
        if 0 <= beyond < nk:  # a cut through the grid: only the faces with no fine column beyond are wall
            quads = np.concatenate(faces[end])
            column = ((quads // n_up) % n_across).min(axis=1)  # coarse column of each face
            out.append(quads[~mask[beyond, across[column]]])
    return surface.table(along, across, up).reshape(-1)[np.concatenate(out)]


def decimated_surface(surface: GridSurface, points: np.ndarray, limit: int, scale: float = 1.0) -> DrawingSurface:
    """The whole surface to draw with at most about ``limit`` facets (each group its
    ``group_share``), on subsets of the grid's node lines; ``points`` the mesh's, ``scale``
    multiplies them (1e3 draws in mm). ``cube`` reports the wall's step."""
    names = list(surface.counts)
    total = sum(surface.counts.values())
    blocks: list[tuple[int, np.ndarray]] = []
    step = 0.0
    for gi, name in enumerate(names):
        share = group_share(surface.counts[name], total, limit)
        if surface.counts[name] <= share:  # every cell of the group fits
            everything = [np.arange(n + 1) for n in surface.grid.shape]
            quads = wall_quads(surface, *everything) if name == WALL else plane_quads(surface, name)
        elif name == WALL:
            quads, step = _decimated_wall(surface, share)
        else:
            quads = _decimated_plane(surface, name, share)
        blocks.append((gi, quads))
    drawn = blocks_surface(points, names, blocks, sum(len(c) for _, c in blocks), scale)
    return dataclasses.replace(drawn, facets_in_mesh=total, cube=step * scale)


def _fitted_step(count_at, start: float, share: int) -> float:  # type: ignore[no-untyped-def]
    """A step whose ``count_at(step)`` is at most ``share``: ``start``, grown by the square
    root of the excess plus 2 % until it fits (the facets fall about as 1/step^2, and as
    1/step once the lines across or up are down to the fixed ones)."""
    step = start
    while (count := count_at(step)) > share:
        step *= 1.02 * float(np.sqrt(count / share))
    return step


def _decimated_wall(surface: GridSurface, share: int) -> tuple[np.ndarray, float]:
    mask = surface.grid.column_mask()
    must_k = [p.k for p in surface.planes.values()] + list(np.flatnonzero((mask[1:] != mask[:-1]).any(axis=1)) + 1)
    must_i = [x for p in surface.planes.values() for x in (p.i0, p.i1)] \
        + list(np.flatnonzero((mask[:, 1:] != mask[:, :-1]).any(axis=0)) + 1)
    must_j = [x for p in surface.planes.values() for x in (p.j0, p.j1)]
    height = float(surface.up[-1])
    length, width = float(surface.along[-1]), float(surface.across[-1])

    def lines(step: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        return (_lines(surface.along, step, np.array(must_k, np.int64)),
                _lines(surface.across, step, np.array(must_i, np.int64)),
                _lines(surface.up, min(step, 0.5 * height), np.array(must_j, np.int64)))

    def count(step: float) -> int:
        k, i, j = lines(step)
        inside, _ = _open_sides(mask[np.ix_(k[:-1], i[:-1])])
        return 2 * int(mask[np.ix_(k[:-1], i[:-1])].sum()) + (len(j) - 1) * inside

    step = _fitted_step(count, float(np.sqrt(2.0 * (width + height) * length / share)), share)
    return wall_quads(surface, *lines(step)), step


def _decimated_plane(surface: GridSurface, name: str, share: int) -> np.ndarray:
    p = surface.planes[name]
    across, up = surface.across[p.i0:p.i1 + 1], surface.up[p.j0:p.j1 + 1]

    def lines(step: float) -> tuple[np.ndarray, np.ndarray]:
        return _lines(across, step, np.zeros(0, np.int64)) + p.i0, _lines(up, step, np.zeros(0, np.int64)) + p.j0

    def count(step: float) -> int:
        i, j = lines(step)
        return (len(i) - 1) * (len(j) - 1)

    area = float((across[-1] - across[0]) * (up[-1] - up[0]))
    return plane_quads(surface, name, *lines(_fitted_step(count, float(np.sqrt(area / share)), share)))


def closeup_candidates(surface: GridSurface, port: str, layers: int) -> tuple[list[tuple[int, np.ndarray]], np.ndarray]:
    """Every facet of the ``layers`` cell layers at ``port``'s end of the grid, as (group
    index in ``surface.counts``, quads in mesh node numbers) blocks, and for each facet
    whether it touches the far node layer of that stretch (when none of those lies near the
    port, nothing beyond can be joined to it)."""
    nk, ni, nj = surface.grid.shape
    layers = min(max(layers, 1), nk)
    k0, k1 = (0, layers) if surface.planes[port].k == 0 else (nk - layers, nk)
    along, across, up = np.arange(k0, k1 + 1), np.arange(ni + 1), np.arange(nj + 1)
    far_nodes = surface.table(np.array([k1 if k0 == 0 else k0]), across, up).reshape(-1)
    far_nodes = far_nodes[far_nodes >= 0]
    blocks, far = [], []
    for gi, name in enumerate(surface.counts):
        if name == WALL:
            quads = wall_quads(surface, along, across, up)
        elif k0 <= surface.planes[name].k <= k1:
            quads = plane_quads(surface, name)
        else:
            continue
        blocks.append((gi, quads))
        far.append(np.isin(quads, far_nodes).any(axis=1))
    return blocks, np.concatenate(far)
