"""Face pairing by hash table against numpy's sort-based np.unique (the reference here)."""

from __future__ import annotations

import numpy as np
import pytest
from _hex_designs import hex_design

from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.measure import _HEX_TETS
from chanmesh.meshing.verify import FACES
from chanmesh.post.facepairs import pair_faces


@pytest.mark.parametrize("kind", ["hexahedron", "tetra"])
def test_pairs_match_np_unique(kind):
    hexes = mesh_hex(hex_design("chambers")).volumes[0].cells
    cells = hexes if kind == "hexahedron" else hexes[:, _HEX_TETS].reshape(-1, 4)
    local = FACES[kind][1] if kind == "hexahedron" else FACES[kind][0]
    faces = cells[:, np.array(local)].reshape(-1, len(local[0]))
    partner = pair_faces(faces)
    _, inverse, counts = np.unique(np.sort(faces, axis=1), axis=0, return_inverse=True, return_counts=True)
    inverse = inverse.ravel()
    assert np.array_equal(partner < 0, counts[inverse] == 1)
    paired = np.flatnonzero(partner >= 0)
    assert np.array_equal(inverse[partner[paired]], inverse[paired])
    assert np.array_equal(partner[partner[paired]], paired)


def test_three_faces_on_the_same_nodes_are_refused():
    with pytest.raises(ValueError, match="not manifold"):
        pair_faces(np.array([[0, 1, 2], [2, 1, 0], [1, 0, 2], [3, 4, 5]]))
