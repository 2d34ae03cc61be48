"""The linear-time face table against numpy's sort-based np.unique (the reference here)."""

from __future__ import annotations

import numpy as np
import pytest
from _hex_designs import hex_design
from conftest import small_design

from chanmesh.meshing.faces import face_table, forget_face_tables
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.model import Block, ChannelMesh
from chanmesh.meshing.registry import mesher_for
from chanmesh.meshing.sweep_grid import cells_follow_grid, sweep_partner
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
    mesh = mesh_hex(hex_design("arc"))
    mesh.sweep = None  # hash pairing, not the grid's
    _check_against_unique(mesh)


def _assert_grid_pairing_is_hash_pairing(mesh: ChannelMesh) -> None:
    """The partner of every slot from the sweep's indices equals the hash pairing's."""
    from_grid = face_table(mesh, 4).partner
    forget_face_tables(mesh)
    mesh.sweep = None
    assert np.array_equal(from_grid, face_table(mesh, 4).partner)


@pytest.mark.parametrize("kind", ["arc", "chambers", "serpentine"])
def test_grid_pairing_equals_hash_pairing(kind):
    """The pairing read from the sweep's indices is the hash pairing, slot for slot."""
    mesh = mesh_hex(hex_design(kind))
    assert mesh.sweep is not None and cells_follow_grid(mesh.sweep, mesh.volumes[0].cells)
    _assert_grid_pairing_is_hash_pairing(mesh)


def test_grid_pairing_is_not_trusted_when_the_cells_moved():
    """Cells that no longer follow the grid (here two cells swapped) are paired by hashing."""
    mesh = mesh_hex(hex_design("chambers"))
    cells = mesh.volumes[0].cells
    mesh.volumes[0].cells = np.concatenate([cells[1:2], cells[:1], cells[2:]])
    assert not cells_follow_grid(mesh.sweep, mesh.volumes[0].cells)
    assert sweep_partner(mesh.sweep, mesh.volumes[0].cells) is None
    _check_against_unique(mesh)


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


@pytest.mark.parametrize("name", ["asymmetric-serpentine", "chamber-array", "spiral-sorter", "two-inlet-spiral"])
def test_grid_pairing_equals_hash_pairing_on_the_templates(name):
    """Templates carry sections, split ends and masked chamber columns: same pairing both ways."""
    from pathlib import Path

    from chanmesh.design import load_design

    design = load_design(Path(__file__).parents[1] / "templates" / f"{name}.toml")
    mesh = mesh_hex(design, scale=0.1)
    _assert_grid_pairing_is_hash_pairing(mesh)
    sections = [g.tag for g in mesh.groups if g.name.startswith("section_")]
    boundary = sum(int(np.sum(~np.isin(b.tags, sections))) for b in mesh.facets)
    assert check_boundary_tagging(mesh)["boundary_facets"] == boundary


def test_a_face_pairing_that_misses_a_shared_face_is_refused(monkeypatch):
    """If the pairing (here the grid's, broken on purpose) misses a face two cells share, both
    copies look like boundary faces: the check finds them equal and refuses the mesh."""
    import chanmesh.meshing.faces as faces

    good = faces.sweep_partner

    def broken(grid, cells, proven=False):
        partner = good(grid, cells, proven).copy()
        inner = int(np.flatnonzero(partner >= 0)[0])
        partner[partner[inner]] = -1
        partner[inner] = -1
        return partner

    monkeypatch.setattr(faces, "sweep_partner", broken)
    with pytest.raises(MeshCheckError, match="taken for boundary faces"):
        check_boundary_tagging(mesh_hex(hex_design("arc")))
