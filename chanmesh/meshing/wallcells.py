"""Tetrahedra with two or more faces on the wall.

Along the channel's corner edges a tetrahedral mesher leaves cells with two (or three) faces on
the boundary: nearly flat, with a small determinant, which a finite-volume solver's full
geometry check flags. The tet mesher records their number in the manifest
(``mesher.tets_with_two_wall_faces``) so that a user knows before running such a solver.
"""

from __future__ import annotations

import numpy as np

from chanmesh.meshing.model import ChannelMesh

_TET_FACES = np.array([[0, 1, 2], [0, 1, 3], [0, 2, 3], [1, 2, 3]])


def _keys(tri: np.ndarray, n_points: int) -> np.ndarray:
    """One integer per triangle, independent of node order."""
    s = np.sort(np.asarray(tri, dtype=np.int64), axis=1)
    return (s[:, 0] * n_points + s[:, 1]) * n_points + s[:, 2]


def wall_faces_per_tet(mesh: ChannelMesh, groups: tuple[str, ...] = ("wall",)) -> np.ndarray:
    """For each tetrahedron (in block order), how many of its faces are facets of ``groups``."""
    tets = [b.cells for b in mesh.volumes if b.type == "tetra"]
    if not tets:
        return np.zeros(0, dtype=np.int64)
    cells = np.concatenate(tets)
    wall = [b.cells for name in groups for b in mesh.facets_of(name) if b.type == "triangle"]
    if not wall:
        return np.zeros(len(cells), dtype=np.int64)
    n = len(mesh.points)
    wall_keys = np.unique(_keys(np.concatenate(wall), n))
    face_keys = _keys(cells[:, _TET_FACES].reshape(-1, 3), n).reshape(-1, 4)
    on_wall = np.isin(face_keys, wall_keys)
    return on_wall.sum(axis=1)


def count_multi_wall_tets(mesh: ChannelMesh) -> int:
    """Tetrahedra with two or more faces on the wall group."""
    return int(np.sum(wall_faces_per_tet(mesh) >= 2))
