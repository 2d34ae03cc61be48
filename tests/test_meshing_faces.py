"""The linear-time face table against numpy's sort-based np.unique (the reference here)."""

from __future__ import annotations

import numpy as np
import pytest
from _hex_designs import hex_design
from conftest import small_design

from chanmesh.meshing.faces import face_table
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.model import Block, ChannelMesh
from chanmesh.meshing.registry import mesher_for
from chanmesh.meshing.verify import MeshCheckError, all_faces, check_boundary_tagging


def _check_against_unique(mesh: ChannelMesh) -> None:
    for size, faces in all_faces(mesh).items():
        table = face_table(mesh, size)
        if not len(faces):
            assert table is None
            continue
        _, inverse, counts = np.unique(faces, axis=0, return_inverse=True, return_counts=True)
        inverse = inverse.ravel()
        partner = table.partner.astype(np.int64)
        assert np.array_equal(partner < 0, counts[inverse] == 1)
        paired = np.flatnonzero(partner >= 0)
        assert np.array_equal(inverse[partner[paired]], inverse[paired])
        assert np.array_equal(partner[partner[paired]], paired)
        assert np.array_equal(np.sort(table.nodes(np.arange(len(faces))), axis=1), faces)


@pytest.mark.parametrize("kind", ["arc", "chambers", "serpentine"])
def test_face_table_matches_np_unique_on_hex_meshes(kind):
    _check_against_unique(mesh_hex(hex_design(kind)))


def test_face_table_matches_np_unique_on_a_tet_mesh():
    d = small_design("spiral")
    _check_against_unique(mesher_for(d).mesh(d))


def test_face_table_survives_hash_collisions(monkeypatch):
    """With every hash equal, all slots take the exact fallback and still pair correctly."""
    import chanmesh.meshing.faces as faces

    monkeypatch.setattr(faces, "face_hash", lambda cols: np.zeros(len(cols[0]), np.uint64))
    _check_against_unique(mesh_hex(hex_design("arc")))


def test_an_untagged_and_a_doubly_tagged_facet_are_refused():
    mesh = mesh_hex(hex_design("arc"))
    quads = mesh.facets[0]
    cut = ChannelMesh(mesh.points, mesh.volumes, [Block("quad", quads.cells[1:], quads.tags[1:])], mesh.groups)
    with pytest.raises(MeshCheckError, match="carry no group"):
        check_boundary_tagging(cut)
    twice = ChannelMesh(mesh.points, mesh.volumes,
                        [Block("quad", np.concatenate([quads.cells, quads.cells[:1]]), np.concatenate([quads.tags, quads.tags[:1]]))],
                        mesh.groups)
    with pytest.raises(MeshCheckError, match="more than one group"):
        check_boundary_tagging(twice)


def test_face_table_over_several_volume_blocks():
    """Cells split over three blocks (as a mixed mesh has them): slots of every block pair with
    slots of the others, nodes and owners found across blocks, against np.unique."""
    mesh = mesh_hex(hex_design("arc"))
    cells, tags = mesh.volumes[0].cells, mesh.volumes[0].tags
    cut = [0, len(cells) // 3, 2 * len(cells) // 3, len(cells)]
    blocks = [Block("hexahedron", cells[a:b], tags[a:b]) for a, b in zip(cut[:-1], cut[1:])]
    split = ChannelMesh(mesh.points, blocks, mesh.facets, mesh.groups)
    _check_against_unique(split)
    table = face_table(split, 4)
    slots = np.arange(len(table.partner))
    assert np.array_equal(table.owner(slots), slots // 6)  # six quads a hexahedron, cells in order
