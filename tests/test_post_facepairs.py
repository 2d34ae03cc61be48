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


def _shuffled_faces(seed: int = 3) -> np.ndarray:
    """Distinct random quads, a quarter of them present twice (the second copy reversed, as the
    neighbouring cell lists it), shuffled."""
    rng = np.random.default_rng(seed)
    u = np.unique(np.sort(rng.integers(0, 10**6, (4000, 4)), axis=1), axis=0)
    g = np.concatenate([u, u[:1000, ::-1]])
    return g[rng.permutation(len(g))]


def test_sorting_pairs_agree_with_probing():
    from chanmesh.post.facepairs import pair_faces_sorted

    g = _shuffled_faces()
    assert np.array_equal(pair_faces_sorted(g), pair_faces(g))
    assert np.sum(pair_faces_sorted(g) >= 0) == 2000


def test_sorting_pairs_survive_hash_collisions(monkeypatch):
    """With a hash that sends every face to one value, all faces take the exact fallback and
    the answer is unchanged."""
    import chanmesh.post.facepairs as fp

    g = _shuffled_faces()[:600]
    expected = fp.pair_faces(g)
    monkeypatch.setattr(fp, "_MIX", (np.uint64(0), np.uint64(0), np.uint64(0)))
    assert np.array_equal(fp.pair_faces_sorted(g), expected)


def test_sorted_order_is_a_stable_argsort():
    from chanmesh.post.facepairs import sorted_order

    rng = np.random.default_rng(5)
    for high in (10, 10**9, 2**62):  # the last cannot pack the index: np.argsort path
        k = rng.integers(0, high, 5000)
        assert np.array_equal(sorted_order(k), np.argsort(k, kind="stable"))
