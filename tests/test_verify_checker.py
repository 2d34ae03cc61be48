"""The boundary-tagging check itself, fed meshes that break its rule.

Every mesh test relies on ``check_boundary_tagging`` refusing a mesh in which a boundary facet
carries no group, carries two, or in which a tagged face lies inside the volume. These meshes
are made by hand (two unit cubes side by side; two tetrahedra sharing a face), so which faces
are on the boundary is known by inspection: a face used by one cell is a boundary face, a face
used by two is interior (the definition of a conforming mesh's boundary). A real hexahedral
mesh is then damaged the same three ways.
"""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.verify import MeshCheckError, check_boundary_tagging

GROUPS = [Group("inlet", 2, 1), Group("outlet", 2, 2), Group("wall", 2, 3), Group("section_1", 2, 4), Group("fluid", 3, 5)]

# two unit cubes along x: nodes (x, y, z) with x in {0, 1, 2}; node index = 4 x + 2 y + z ... set by hand
_P = np.array([[x, y, z] for x in (0.0, 1.0, 2.0) for y in (0.0, 1.0) for z in (0.0, 1.0)])


def _node(x: int, y: int, z: int) -> int:
    return 4 * x + 2 * y + z


def _hex(x: int) -> list[int]:
    """VTK/gmsh hexahedron order: bottom face 0-1-2-3 counter-clockwise seen from above, then top."""
    return [_node(x, 0, 0), _node(x + 1, 0, 0), _node(x + 1, 1, 0), _node(x, 1, 0),
            _node(x, 0, 1), _node(x + 1, 0, 1), _node(x + 1, 1, 1), _node(x, 1, 1)]


def _boxes() -> tuple[list[list[int]], list[int], list[int]]:
    """The ten boundary quads of the two cubes with their tags, and the one interior quad (x = 1)."""
    quads, tags = [], []
    quads.append([_node(0, 0, 0), _node(0, 1, 0), _node(0, 1, 1), _node(0, 0, 1)])
    tags.append(1)  # x = 0: inlet
    quads.append([_node(2, 0, 0), _node(2, 0, 1), _node(2, 1, 1), _node(2, 1, 0)])
    tags.append(2)  # x = 2: outlet
    for x in (0, 1):
        quads += [
            [_node(x, 0, 0), _node(x, 1, 0), _node(x + 1, 1, 0), _node(x + 1, 0, 0)],  # z = 0
            [_node(x, 0, 1), _node(x + 1, 0, 1), _node(x + 1, 1, 1), _node(x, 1, 1)],  # z = 1
            [_node(x, 0, 0), _node(x + 1, 0, 0), _node(x + 1, 0, 1), _node(x, 0, 1)],  # y = 0
            [_node(x, 1, 0), _node(x, 1, 1), _node(x + 1, 1, 1), _node(x + 1, 1, 0)],  # y = 1
        ]
        tags += [3, 3, 3, 3]
    interior = [_node(1, 0, 0), _node(1, 1, 0), _node(1, 1, 1), _node(1, 0, 1)]
    return quads, tags, interior


def _box_mesh(quads: list[list[int]], tags: list[int]) -> ChannelMesh:
    cells = np.array([_hex(0), _hex(1)])
    return ChannelMesh(_P.copy(), [Block("hexahedron", cells, np.array([5, 5]))],
                       [Block("quad", np.array(quads), np.array(tags))], list(GROUPS))


def test_a_correctly_tagged_box_passes_and_counts_its_faces():
    quads, tags, _ = _boxes()
    counts = check_boundary_tagging(_box_mesh(quads, tags))
    # 2 cubes x 6 faces = 12 face uses = 10 boundary + 2 x 1 interior
    assert counts["boundary_facets"] == 10 and counts["interior_faces"] == 1


@pytest.mark.parametrize("drop", [0, 1, 5])
def test_a_dropped_boundary_facet_is_refused(drop):
    quads, tags, _ = _boxes()
    del quads[drop], tags[drop]
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_box_mesh(quads, tags))


@pytest.mark.parametrize("second_tag", [3, 1])  # the same group twice, or a second group
def test_a_double_tagged_facet_is_refused(second_tag):
    quads, tags, _ = _boxes()
    quads.append(list(reversed(quads[4])))  # same face, other node order
    tags.append(second_tag)
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_box_mesh(quads, tags))


@pytest.mark.parametrize("tag", [1, 3])
def test_an_interior_face_tagged_as_a_boundary_group_is_refused(tag):
    quads, tags, interior = _boxes()
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_box_mesh(quads + [interior], tags + [tag]))


def test_an_interior_face_in_a_section_group_is_allowed():
    quads, tags, interior = _boxes()
    counts = check_boundary_tagging(_box_mesh(quads + [interior], tags + [4]))
    assert counts["boundary_facets"] == 10


def _two_tets() -> tuple[np.ndarray, np.ndarray, list[list[int]]]:
    """Two tetrahedra on either side of the triangle 0-1-2 (apexes 3 above, 4 below)."""
    p = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0.2, 0.2, 1], [0.2, 0.2, -1]], float)
    cells = np.array([[0, 1, 2, 3], [0, 2, 1, 4]])
    boundary = [[0, 1, 3], [1, 2, 3], [2, 0, 3], [0, 1, 4], [1, 2, 4], [2, 0, 4]]
    return p, cells, boundary


def _tet_mesh(tris: list[list[int]], tags: list[int]) -> ChannelMesh:
    p, cells, _ = _two_tets()
    return ChannelMesh(p, [Block("tetra", cells, np.array([5, 5]))],
                       [Block("triangle", np.array(tris), np.array(tags))], list(GROUPS))


def test_tetrahedra_three_ways_wrong_and_one_right():
    _, _, boundary = _two_tets()
    tags = [1, 3, 3, 2, 3, 3]
    assert check_boundary_tagging(_tet_mesh(boundary, tags))["boundary_facets"] == 6
    with pytest.raises(MeshCheckError):  # dropped
        check_boundary_tagging(_tet_mesh(boundary[1:], tags[1:]))
    with pytest.raises(MeshCheckError):  # double-tagged
        check_boundary_tagging(_tet_mesh(boundary + [boundary[2]], tags + [3]))
    with pytest.raises(MeshCheckError):  # interior face tagged wall
        check_boundary_tagging(_tet_mesh(boundary + [[0, 1, 2]], tags + [3]))
    assert check_boundary_tagging(_tet_mesh(boundary + [[0, 1, 2]], tags + [4]))["boundary_facets"] == 6


def _damaged(mesh: ChannelMesh, keep: np.ndarray | None = None, extra: np.ndarray | None = None,
             extra_tag: int = 0) -> ChannelMesh:
    b = mesh.facets[0]
    cells, tags = b.cells, b.tags
    if keep is not None:
        cells, tags = cells[keep], tags[keep]
    if extra is not None:
        cells = np.concatenate([cells, extra])
        tags = np.concatenate([tags, np.full(len(extra), extra_tag)])
    return ChannelMesh(mesh.points, mesh.volumes, [Block(b.type, cells, tags)], mesh.groups)


def test_a_real_hex_mesh_damaged_three_ways_is_refused():
    from _hex_designs import hex_design

    from chanmesh.meshing.hex import mesh_hex

    mesh = mesh_hex(hex_design("arc", mesh="cells_across = 4\ncells_high = 2\ncells_along = 6"))
    check_boundary_tagging(mesh)
    quads = mesh.facets[0].cells
    wall = mesh.group("wall").tag
    keep = np.ones(len(quads), bool)
    keep[len(quads) // 2] = False
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_damaged(mesh, keep=keep))
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_damaged(mesh, extra=quads[:1], extra_tag=wall))
    # an interior face: the second hexahedron layer's first face (x-min of a cell not on the inlet)
    cells = mesh.volumes[0].cells
    face_rows = np.sort(np.concatenate([cells[:, [0, 3, 2, 1]], cells[:, [4, 5, 6, 7]], cells[:, [0, 1, 5, 4]],
                                        cells[:, [1, 2, 6, 5]], cells[:, [2, 3, 7, 6]], cells[:, [3, 0, 4, 7]]]), axis=1)
    rows, n = np.unique(face_rows, axis=0, return_counts=True)
    interior = rows[n == 2][:1]
    with pytest.raises(MeshCheckError):
        check_boundary_tagging(_damaged(mesh, extra=interior, extra_tag=wall))
