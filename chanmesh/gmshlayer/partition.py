"""Share a long channel's tetrahedral meshing between processes: each meshes the pieces
between two seams.

gmsh's surface and volume steps run on one thread here (on more, HXT and the surface step do
not give the same mesh twice, docs/robustness.md). A channel long enough to be cut for the
surface step (``sections.surface_splits``) is instead split at some of those cuts, the
*seams*, into ``PARTS`` contiguous parts. Every part builds the same solid with the same
sections and cuts, meshes its seams alone first and then only its own pieces
(``Mesh.MeshOnlyVisible``, ``Mesh.MeshOnlyEmpty``); the parts are then joined at the seams
(``meshing.tet_merge``). A seam face is meshed by both parts that touch it, from the same
geometry, the same size field and the same state, so both put the same triangles on it; the
join checks exactly that before it trusts it.

The number of parts follows from the design alone, never from the machine's cores, so a
design gives the same mesh everywhere; on one core the parts simply run in turn.
"""

from __future__ import annotations

from collections.abc import Sequence

import gmsh

PARTS = 2
"""Parts a cut channel is meshed in. Every part builds and cuts the whole solid (about a tenth
of its meshing time), so more parts than the cores of a common machine would cost more than
they save; two halve the surface and volume steps on the two cores this project is measured
on (bench/RESULTS.md, "Tetrahedra")."""


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


def part_seams(n_splits: int, part: int, parts: int) -> tuple[int | None, int | None]:
    """Indices into the ``n_splits`` surface cuts of the seams before and after part ``part``
    (None for the first and the last part). Every part embeds all the cuts: a part that
    embedded only its own gave a seam face that meshed differently on its two sides (two
    templates of six)."""
    if parts == 1:
        return None, None
    seams = seam_indices(n_splits, parts)
    return (seams[part - 1] if part > 0 else None), (seams[part] if part < parts - 1 else None)


def own_pieces(pieces: Sequence[int], seams: Sequence[int], inlet_face: int, part: int) -> list[int]:
    """The fluid volumes of part ``part``: ``pieces`` are the volumes after
    ``sections.embed_sections``, ``seams`` the faces of this part's seams and ``inlet_face`` a
    face of the inlet. The pieces are reached from the inlet's; crossing a
    seam moves to the next part's side (this part's own seams only, so the part before this
    one is side 0 and this one side 1)."""
    faces = {v: {int(s) for s in gmsh.model.getAdjacencies(3, v)[1]} for v in pieces}
    upward = {int(v) for v in gmsh.model.getAdjacencies(2, inlet_face)[0]}
    start = next(v for v in pieces if v in upward)
    side = {start: 0}
    todo = [start]
    crossing = set(seams)
    while todo:  # breadth-first along the chain of pieces
        v = todo.pop(0)
        for u in pieces:
            if u in side:
                continue
            shared = faces[v] & faces[u]
            if shared:
                side[u] = side[v] + (1 if shared & crossing else 0)
                todo.append(u)
    mine = sorted(v for v in pieces if side.get(v) == (0 if part == 0 else 1))
    if not mine:
        raise RuntimeError(f"part {part + 1} found no pieces of its own between its seams")
    return mine


def mesh_seams_then_part(seams: Sequence[int], mine: Sequence[int]) -> None:
    """Mesh the seam faces alone first, then part's own volumes around them.

    The seams come first so that both parts that share one mesh it in the same state: gmsh's
    surface mesh of a face depends on what was meshed before it, not only on the face (meshed
    among its part's faces, the same seam of an arc got 201 nodes in one part and 200 in the
    other).
    ``Mesh.MeshOnlyEmpty`` keeps them as they are while the rest is meshed.
    """
    if seams:
        _show_only([(2, f) for f in seams])
        gmsh.model.mesh.generate(2)
    _show_only([(3, v) for v in mine])
    gmsh.option.setNumber("Mesh.MeshOnlyEmpty", 1)
    gmsh.model.mesh.generate(3)


def _show_only(dim_tags: list[tuple[int, int]]) -> None:
    gmsh.model.setVisibility(gmsh.model.getEntities(), 0)
    gmsh.model.setVisibility(dim_tags, 1, recursive=True)
    gmsh.option.setNumber("Mesh.MeshOnlyVisible", 1)
