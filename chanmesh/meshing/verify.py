"""Checks every mesh must pass before it is written: each boundary facet in exactly one group.

Boundary facets are the faces of volume cells that belong to one cell only. A mesh in which a
boundary facet has no group (a solver would not know its condition) or two groups, or in which
a tagged facet is not on the boundary, is refused. Internal surfaces (groups named
``section_*``) are the exception: they lie inside by design.

The check runs in linear time on the face pairing of ``faces.face_table`` (shared with the
quality figures); ``face_use_counts`` is the plain sorting reference the tests compare it with.
"""

from __future__ import annotations

import numpy as np

from chanmesh.meshing.faces import FACES, face_table
from chanmesh.meshing.model import ChannelMesh
from chanmesh.post.facepairs import pair_faces


INTERNAL_PREFIX = "section_"


class MeshCheckError(RuntimeError):
    """The mesh breaks an invariant; this is a chanmesh bug or a gmsh failure, not user input."""


def all_faces(mesh: ChannelMesh) -> dict[int, np.ndarray]:
    """Sorted node rows of every face of every volume cell, keyed by face size (3 or 4)."""
    out: dict[int, list[np.ndarray]] = {3: [], 4: []}
    for b in mesh.volumes:
        tris, quads = FACES[b.type]
        for local, size in ((tris, 3), (quads, 4)):
            if local:
                f = b.cells[:, np.array(local)].reshape(-1, size)
                out[size].append(np.sort(f, axis=1))
    return {k: np.concatenate(v) if v else np.zeros((0, k), np.int64) for k, v in out.items()}


def face_use_counts(mesh: ChannelMesh) -> dict[int, tuple[np.ndarray, np.ndarray]]:
    """Unique faces and how many cells use each, per face size."""
    return {k: np.unique(f, axis=0, return_counts=True) for k, f in all_faces(mesh).items()}


def check_boundary_tagging(mesh: ChannelMesh) -> dict[str, int]:
    """Raise ``MeshCheckError`` unless every boundary facet carries exactly one surface group.

    Returns counts: boundary facets, tagged facets, interior faces, non-manifold faces (used by
    more than two cells, always zero for a valid mesh).
    """
    internal = [g.tag for g in mesh.groups if g.dim == 2 and g.name.startswith(INTERNAL_PREFIX)]
    counts = {"boundary_facets": 0, "interior_faces": 0}
    for size in (3, 4):
        ftype = "triangle" if size == 3 else "quad"
        blocks = [(b, ~np.isin(b.tags, internal)) for b in mesh.facets if b.type == ftype]
        tagged = np.concatenate([b.cells[k] for b, k in blocks]) if blocks else np.zeros((0, size), np.int64)
        tags = np.concatenate([b.tags[k] for b, k in blocks]) if blocks else np.zeros(0, np.int64)
        try:
            table = face_table(mesh, size)
        except ValueError:
            uses = face_use_counts(mesh)[size][1]
            raise MeshCheckError(f"{int(np.sum(uses > 2))} faces are shared by more than two cells") from None
        if table is None:
            boundary = np.zeros((0, size), np.int64)
        else:
            bslots = np.flatnonzero(table.partner < 0)
            boundary = table.nodes(bslots)
            counts["interior_faces"] += int((len(table.partner) - len(bslots)) // 2)
        counts["boundary_facets"] += len(boundary)
        partner = _match(boundary, tagged, ftype)
        if table is not None:  # each boundary slot's group, for the quality figures' wall cells
            read = [a for b in mesh.facets for a in (b.cells, b.tags)]
            table.boundary_tags = (read, tags[partner[:len(boundary)] - len(boundary)])
    return counts


def _match(boundary: np.ndarray, tagged: np.ndarray, ftype: str) -> np.ndarray:
    """Each boundary face equals exactly one tagged facet and each tagged facet one boundary face;
    returns the pairing of ``pair_faces`` (boundary i <-> tagged ``partner[i] - len(boundary)``)."""
    nb = len(boundary)
    try:
        partner = pair_faces(np.concatenate([boundary, tagged]))
    except ValueError:  # the same face three times: a boundary face tagged twice
        uniq, tcount = np.unique(np.sort(tagged, axis=1), axis=0, return_counts=True)
        raise MeshCheckError(f"{int(np.sum(tcount > 1))} boundary {ftype}s carry more than one group") from None
    inside = int(np.sum((partner[:nb] >= 0) & (partner[:nb] < nb)))  # "boundary" faces paired with each other
    if inside:
        raise MeshCheckError(f"{inside // 2} {ftype}s shared by two cells were taken for boundary faces")
    twice = int(np.sum(partner[nb:] >= nb))  # tagged facets paired with each other
    if twice:
        raise MeshCheckError(f"{twice // 2} boundary {ftype}s carry more than one group")
    untagged = int(np.sum(partner[:nb] < 0))
    if untagged:
        raise MeshCheckError(f"{untagged} boundary {ftype}s carry no group")
    stray = int(np.sum(partner[nb:] < 0))
    if stray:
        raise MeshCheckError(f"{stray} tagged {ftype}s are not on the boundary")
    return partner
