"""Join the parts of a tetrahedral mesh meshed apart (``gmshlayer.partition``) at their seams.

Each part comes with its own nodes; the nodes on a seam appear in both parts that touch it.
They are matched by position (the two parts computed them from the same geometry, to within
round-off, so the tolerance is a billionth of the seam's size while neighbouring nodes lie
micrometres apart), and the seam's triangles must then be the same in both parts: the same
surface mesh on both sides is what makes the tetrahedra conform. Anything else raises
``SeamMismatch``, and the caller meshes the channel in one part instead.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from chanmesh.meshing.model import Block, ChannelMesh

SEAM_TOL = 1e-9
"""Largest distance between a seam node's two copies, as a fraction of the seam's diagonal."""


class SeamMismatch(RuntimeError):
    """Two parts meshed a seam differently; their tetrahedra would not conform."""


@dataclass
class Seam:
    """A part's nodes and triangles on one seam: rows of its ``ChannelMesh.points``."""

    nodes: np.ndarray  # (k,) int64, ascending
    triangles: np.ndarray  # (m, 3) int64


@dataclass
class TetPart:
    """One part's mesh (its own pieces, its named boundary triangles, its nodes) and its seams,
    keyed by seam index (seam i joins part i and part i + 1)."""

    mesh: ChannelMesh
    seams: dict[int, Seam] = field(default_factory=dict)
    pieces: int = 0  # fluid volumes this part meshed


def merge_parts(parts: Sequence[TetPart]) -> ChannelMesh:
    """One ``ChannelMesh`` from ``parts`` in order: the first part's nodes, then each next part's
    nodes that are not on its seam with the one before; cells in part order, then sorted by
    group (stable) so that each group's cells stay together as gmsh writes them."""
    if len(parts) == 1:
        return parts[0].mesh
    first = parts[0].mesh
    for p, part in enumerate(parts[1:], start=1):
        if part.mesh.groups != first.groups:
            raise SeamMismatch(f"part {p + 1} has groups {part.mesh.groups}, part 1 {first.groups}")
    rows = [np.arange(len(first.points))]
    points = [first.points]
    n = len(first.points)
    for p in range(1, len(parts)):
        before, here = parts[p - 1].seams.get(p - 1), parts[p].seams.get(p - 1)
        if before is None or here is None:
            raise SeamMismatch(f"seam {p} is missing from part {p if before is None else p + 1}")
        match = _match_nodes(parts[p - 1].mesh.points[before.nodes], parts[p].mesh.points[here.nodes], p)
        row = np.full(len(parts[p].mesh.points), -1, np.int64)
        row[here.nodes] = rows[p - 1][before.nodes[match]]
        new = row < 0
        row[new] = n + np.arange(int(new.sum()))
        n += int(new.sum())
        if not np.array_equal(_triangle_set(rows[p - 1][before.triangles]), _triangle_set(row[here.triangles])):
            raise SeamMismatch(f"seam {p}: the two parts put different triangles on it")
        rows.append(row)
        points.append(parts[p].mesh.points[new])
    return ChannelMesh(
        np.concatenate(points),
        _joined([part.mesh.volumes for part in parts], rows),
        _joined([part.mesh.facets for part in parts], rows),
        list(first.groups),
    )


def _match_nodes(before: np.ndarray, here: np.ndarray, seam: int) -> np.ndarray:
    """For each node of ``here``, the index of the node of ``before`` at its position."""
    if len(before) != len(here) or not len(here):
        raise SeamMismatch(f"seam {seam}: {len(before)} nodes on one side, {len(here)} on the other")
    tol = SEAM_TOL * float(np.linalg.norm(before.max(axis=0) - before.min(axis=0)))
    # both sides sorted by position; equal meshes then pair up row by row
    a = np.lexsort(before.T[::-1])
    b = np.lexsort(here.T[::-1])
    if np.abs(before[a] - here[b]).max() > tol:
        # round-off reordered two nodes with nearly equal coordinates: pair by nearest instead
        from scipy.spatial import cKDTree

        dist, near = cKDTree(before).query(here)
        if dist.max() > tol or len(np.unique(near)) != len(near):
            raise SeamMismatch(f"seam {seam}: the two parts put nodes in different places (up to {dist.max():.3g} m)")
        return near
    match = np.empty(len(here), np.int64)
    match[b] = a
    return match


def _triangle_set(triangles: np.ndarray) -> np.ndarray:
    t = np.sort(triangles, axis=1)
    return t[np.lexsort(t.T[::-1])]


def _joined(blocks_per_part: Sequence[Sequence[Block]], rows: Sequence[np.ndarray]) -> list[Block]:
    kinds: dict[str, list[tuple[np.ndarray, np.ndarray]]] = {}
    for blocks, row in zip(blocks_per_part, rows):
        for b in blocks:
            kinds.setdefault(b.type, []).append((row[b.cells], b.tags))
    out = []
    for kind, pairs in kinds.items():
        cells = np.concatenate([c for c, _ in pairs])
        tags = np.concatenate([t for _, t in pairs])
        order = np.argsort(tags, kind="stable")
        out.append(Block(kind, cells[order], tags[order]))
    return out
