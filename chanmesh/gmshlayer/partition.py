"""Share a long channel's tetrahedral meshing between processes: each meshes the pieces
between two seams.

gmsh's surface and volume steps run on one thread here (on more, HXT and the surface step do
not give the same mesh twice, docs/robustness.md). A channel long enough to be cut for the
surface step (``sections.surface_splits``) is instead split at some of those cuts, the
*seams*, into ``PARTS`` contiguous parts. Every part builds the same solid, embeds the
sections, its own cuts and the seams that bound it, and meshes only its own pieces
(``Mesh.MeshOnlyVisible``); the parts are then joined at the seams
(``meshing.tet_merge``). A seam face is meshed by both parts that touch it: from the same
geometry with the same size field gmsh puts the same triangles on it (measured on the bench
spiral: the same 116 nodes and 176 triangles, coordinates equal to 4e-16 mm), and the join
checks exactly that before it trusts it.

The number of parts follows from the design alone, never from the machine's cores, so a
design gives the same mesh everywhere; on one core the parts simply run in turn.
"""

from __future__ import annotations

from collections.abc import Sequence

import gmsh

PARTS = 2
"""Parts a cut channel is meshed in. Every part builds the whole solid (about 10 % of its
meshing time), so more parts than the cores of a common machine would cost more than they
save; two halve the surface and volume steps on the two cores this project is measured on
(bench/RESULTS.md, "Tetrahedra")."""


def parts_for(splits: Sequence[float]) -> int:
    """Parts a channel with the surface cuts ``splits`` is meshed in: ``PARTS``, or 1 if it is
    not cut (or has too few pieces to share)."""
    return max(1, min(PARTS, len(splits) + 1))


def seam_indices(n_splits: int, parts: int) -> list[int]:
    """Indices into the ``n_splits`` surface cuts of the ``parts - 1`` seams, which share the
    pieces (``n_splits + 1``) between the parts as evenly as whole pieces allow; the cuts are
    placed at equal wall-triangle counts, so equal pieces are equal work."""
    pieces = n_splits + 1
    return [round(k * pieces / parts) - 1 for k in range(1, parts)]


def part_splits(splits: Sequence[float], part: int, parts: int) -> list[float]:
    """The cuts that part ``part`` of ``parts`` embeds: the seams that bound it and the cuts
    between them (the other parts' pieces stay uncut, which saves each part most of the
    cutting)."""
    if parts == 1:
        return list(splits)
    seams = seam_indices(len(splits), parts)
    lo = seams[part - 1] if part > 0 else 0
    hi = seams[part] if part < parts - 1 else len(splits) - 1
    return list(splits[lo: hi + 1])


def show_only_part(pieces: Sequence[int], cut_faces: Sequence[Sequence[int]], inlet_face: int,
                   part: int, parts: int) -> list[int]:
    """Restrict meshing to part ``part``'s pieces, and return them.

    ``pieces`` are the fluid volumes after ``sections.embed_sections(..., part_splits(...))``,
    ``cut_faces`` the surface tags of each of those cuts (first and last are this part's
    seams, where it has them) and ``inlet_face`` a face of the inlet. The pieces are reached
    from the inlet's; crossing a seam moves to the next part's side.
    """
    if parts == 1:
        return list(pieces)
    seams: set[int] = set()
    if part > 0:
        seams |= set(cut_faces[0])
    if part < parts - 1:
        seams |= set(cut_faces[-1])
    faces = {v: {int(s) for s in gmsh.model.getAdjacencies(3, v)[1]} for v in pieces}
    upward = {int(v) for v in gmsh.model.getAdjacencies(2, inlet_face)[0]}
    start = next(v for v in pieces if v in upward)
    side = {start: 0}
    todo = [start]
    while todo:  # breadth-first along the chain of pieces
        v = todo.pop(0)
        for u in pieces:
            if u in side:
                continue
            shared = faces[v] & faces[u]
            if shared:
                side[u] = side[v] + (1 if shared & seams else 0)
                todo.append(u)
    mine_side = 0 if part == 0 else 1
    mine = sorted(v for v in pieces if side.get(v) == mine_side)
    if not mine:
        raise RuntimeError(f"part {part + 1} of {parts} found no pieces of its own between its seams")
    gmsh.model.setVisibility(gmsh.model.getEntities(), 0)
    gmsh.model.setVisibility([(3, v) for v in mine], 1, recursive=True)
    gmsh.option.setNumber("Mesh.MeshOnlyVisible", 1)
    return mine
