"""Checks every mesh must pass before it is written: each boundary facet in exactly one group.

Boundary facets are the faces of volume cells that belong to one cell only. A mesh in which a
boundary facet has no group (a solver would not know its condition) or two groups, or in which
a tagged facet is not on the boundary, is refused. Internal surfaces (groups named
``section_*``) are the exception: they lie inside by design.
"""

from __future__ import annotations

import numpy as np

from chanmesh.meshing.model import ChannelMesh

FACES = {
    "tetra": ([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]], []),
    "hexahedron": ([], [[0, 3, 2, 1], [4, 5, 6, 7], [0, 1, 5, 4], [1, 2, 6, 5], [2, 3, 7, 6], [3, 0, 4, 7]]),
    "wedge": ([[0, 2, 1], [3, 4, 5]], [[0, 1, 4, 3], [1, 2, 5, 4], [2, 0, 3, 5]]),
}

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
    internal = {g.tag for g in mesh.groups if g.dim == 2 and g.name.startswith(INTERNAL_PREFIX)}
    counts = {"boundary_facets": 0, "interior_faces": 0}
    uses = face_use_counts(mesh)
    for size, (faces, n) in uses.items():
        if np.any(n > 2):
            raise MeshCheckError(f"{int(np.sum(n > 2))} faces are shared by more than two cells")
        boundary = faces[n == 1]
        counts["boundary_facets"] += len(boundary)
        counts["interior_faces"] += int(np.sum(n == 2))
        ftype = "triangle" if size == 3 else "quad"
        tagged = [np.sort(b.cells[~np.isin(b.tags, list(internal))], axis=1) for b in mesh.facets if b.type == ftype]
        tagged_all = np.concatenate(tagged) if tagged else np.zeros((0, size), np.int64)
        uniq, tcount = np.unique(tagged_all, axis=0, return_counts=True)
        if np.any(tcount > 1):
            raise MeshCheckError(f"{int(np.sum(tcount > 1))} boundary {ftype}s carry more than one group")
        both = _row_intersection(boundary, uniq)
        if both != len(boundary):
            raise MeshCheckError(f"{len(boundary) - both} boundary {ftype}s carry no group")
        if both != len(uniq):
            raise MeshCheckError(f"{len(uniq) - both} tagged {ftype}s are not on the boundary")
    return counts


def _row_intersection(a: np.ndarray, b: np.ndarray) -> int:
    if len(a) == 0 or len(b) == 0:
        return 0
    rows = np.concatenate([np.unique(a, axis=0), np.unique(b, axis=0)])
    _, n = np.unique(rows, axis=0, return_counts=True)
    return int(np.sum(n == 2))
