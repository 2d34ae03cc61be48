"""Quality figures against VTK's cell quality filter (through pyvista) and analytic cells."""

from __future__ import annotations

import math

import numpy as np
import pytest
import pyvista as pv
from _hex_designs import TRAPEZOID, hex_design

from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.measure import _HEX_TETS
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.post.quality import edge_ratio, mesh_quality, scaled_jacobian

VTK_TYPES = {"hexahedron": pv.CellType.HEXAHEDRON, "tetra": pv.CellType.TETRA, "wedge": pv.CellType.WEDGE}


def _vtk_scaled_jacobian(points, cell_type, cells):
    grid = pv.UnstructuredGrid({VTK_TYPES[cell_type]: cells}, points)
    return np.asarray(grid.cell_quality("scaled_jacobian")["scaled_jacobian"])


def _jiggled_spiral():
    mesh = mesh_hex(hex_design("spiral", section=TRAPEZOID, mesh="first_cell = 3"))
    rng = np.random.default_rng(7)
    return mesh.points + rng.normal(scale=4e-6, size=mesh.points.shape), mesh.volumes[0].cells


def test_hex_scaled_jacobian_agrees_with_vtk():
    # VTK vtkMeshQuality / Verdict (Stimpson et al. 2007): hex scaled Jacobian; the nodes are
    # jiggled so that the cells are far from ideal and some are inverted
    points, cells = _jiggled_spiral()
    ours = scaled_jacobian(points, "hexahedron", cells)
    assert ours.min() < 0.5
    assert np.allclose(ours, _vtk_scaled_jacobian(points, "hexahedron", cells), atol=1e-12)


def test_tet_and_wedge_scaled_jacobian_agree_with_vtk():
    points, hexes = _jiggled_spiral()
    tets = hexes[:, _HEX_TETS].reshape(-1, 4)
    assert np.allclose(scaled_jacobian(points, "tetra", tets), _vtk_scaled_jacobian(points, "tetra", tets), atol=1e-12)
    wedges = np.concatenate([hexes[:, [0, 1, 2, 4, 5, 6]], hexes[:, [0, 2, 3, 4, 6, 7]]])
    assert np.allclose(
        scaled_jacobian(points, "wedge", wedges), _vtk_scaled_jacobian(points, "wedge", wedges), atol=1e-12
    )


def _box_mesh(shear: float = 0.0) -> ChannelMesh:
    """Two unit-spaced boxes of 1 x 2 x 3 stacked along y; x -> x + shear * y."""
    xs, ys, zs = np.array([0.0, 1.0]), np.array([0.0, 2.0, 4.0]), np.array([0.0, 3.0])
    X, Y, Z = np.meshgrid(xs, ys, zs, indexing="ij")
    pts = np.column_stack([(X + shear * Y).ravel(), Y.ravel(), Z.ravel()])
    idx = lambda i, j, k: (i * 3 + j) * 2 + k  # noqa: E731
    cells = np.array([[idx(0, j, 0), idx(1, j, 0), idx(1, j + 1, 0), idx(0, j + 1, 0),
                       idx(0, j, 1), idx(1, j, 1), idx(1, j + 1, 1), idx(0, j + 1, 1)] for j in (0, 1)])
    bottom = np.array([[idx(0, j, 0), idx(0, j + 1, 0), idx(1, j + 1, 0), idx(1, j, 0)] for j in (0, 1)])
    top = np.array([[idx(0, j, 1), idx(1, j, 1), idx(1, j + 1, 1), idx(0, j + 1, 1)] for j in (0, 1)])
    return ChannelMesh(
        pts,
        [Block("hexahedron", cells, np.array([2, 2]))],
        [Block("quad", np.concatenate([bottom, top]), np.array([1, 1, 1, 1]))],
        [Group("wall", 2, 1), Group("fluid", 3, 2)],
    )


def test_box_figures_are_analytic():
    # a 1 x 2 x 3 box: edge ratio 3, orthogonal, height over the z faces 3 (elementary geometry)
    q = mesh_quality(_box_mesh())
    assert q.aspect_ratio_max == pytest.approx(3.0)
    assert q.scaled_jacobian_min == pytest.approx(1.0)
    assert q.non_orthogonality_max == pytest.approx(0.0, abs=1e-9)
    assert q.wall_cell_min == q.wall_cell_max == pytest.approx(3.0)
    assert q.wall_source == "wall"


def test_non_orthogonality_of_a_sheared_pair():
    """Shear x -> x + a y: the shared face y = 2 keeps its normal along y while the centres move
    by (2a, 2, 0), so the angle is atan(a) (elementary geometry)."""
    a = 0.3
    mesh = _box_mesh(shear=a)
    q = mesh_quality(mesh)
    assert q.non_orthogonality_max == pytest.approx(math.degrees(math.atan(a)), rel=1e-12)
    cells = mesh.volumes[0].cells
    assert np.allclose(scaled_jacobian(mesh.points, "hexahedron", cells), _vtk_scaled_jacobian(mesh.points, "hexahedron", cells))


def test_edge_ratio_of_a_box():
    m = _box_mesh()
    assert np.allclose(edge_ratio(m.points, "hexahedron", m.volumes[0].cells), 3.0)


def test_tet_wall_height_is_the_height_over_the_facet():
    # the tetrahedron (0,0,0), (1,0,0), (0,1,0), (0.2,0.3,h) stands h above its base (definition)
    pts = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0.2, 0.3, 0.7]], float)
    mesh = ChannelMesh(
        pts, [Block("tetra", np.array([[0, 1, 2, 3]]), np.array([2]))],
        [Block("triangle", np.array([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]]), np.array([1, 3, 3, 3]))],
        [Group("wall", 2, 1), Group("other", 2, 3), Group("fluid", 3, 2)],
    )
    q = mesh_quality(mesh)
    assert q.wall_cell_min == pytest.approx(0.7)
    assert q.scaled_jacobian_min == pytest.approx(_vtk_scaled_jacobian(pts, "tetra", np.array([[0, 1, 2, 3]]))[0])


def test_wall_heights_a_few_ulps_apart_still_give_histograms():
    """Two boxes 2.5e-5 m high, the far end of the second a few ulps taller (a straight duct's
    wall cells differ that little): numpy cannot cut that range in 30 bins, and the build
    stopped with a traceback. Heights are the box heights (elementary geometry); the
    histogram counts every wall facet within its edges."""
    h = 2.5e-5
    mesh = _box_mesh()
    mesh.points[:, 2] *= h / 3.0
    far_top = (mesh.points[:, 1] == 4.0) & (mesh.points[:, 2] == h)
    mesh.points[far_top, 2] += 4 * np.spacing(h)
    q = mesh_quality(mesh)
    assert q.wall_cell_min == pytest.approx(h, rel=1e-12, abs=0)
    assert q.wall_cell_max == pytest.approx(h, rel=1e-12, abs=0)
    hist = q.histograms["wall_cell_m"]
    assert sum(hist["counts"]) == 4 and len(hist["edges"]) == 31
    assert hist["edges"][0] < q.wall_cell_min <= q.wall_cell_max < hist["edges"][-1]


def test_cell_centres_are_numpys_node_means_to_the_last_bit():
    """The centres behind the non-orthogonality come from the batch geometry; they must be
    numpy's own ``points[cells].mean(axis=1)`` bit for bit (the reference: numpy), so that the
    figures do not move when the code does."""
    from chanmesh.post.quality import _CellGeometry, _node_means

    points, cells = _jiggled_spiral()
    assert np.array_equal(_node_means(_CellGeometry(points, cells)), points[cells].mean(axis=1))
    tets = cells[:, [0, 1, 3, 4]]
    assert np.array_equal(_node_means(_CellGeometry(points, tets)), points[tets].mean(axis=1))


def test_figures_do_not_depend_on_the_batch_size(monkeypatch):
    """Batches that do not divide the summing chunk give the same figures (a batch once ran
    past its chunk and counted cells twice: mean scaled Jacobian above 1)."""
    import chanmesh.post.quality as quality
    from _hex_designs import hex_design

    from chanmesh.meshing.hex import mesh_hex

    mesh = mesh_hex(hex_design("spiral"))
    expect = quality.mesh_quality(mesh).as_dict()
    monkeypatch.setattr(quality, "CHUNK", 1000)
    monkeypatch.setattr(quality, "SUB", 300)
    got = quality.mesh_quality(mesh).as_dict()
    assert got["scaled_jacobian_min"] == expect["scaled_jacobian_min"]
    assert got["scaled_jacobian_mean"] == pytest.approx(expect["scaled_jacobian_mean"], rel=1e-12)
    assert got["scaled_jacobian_mean"] <= 1.0
    assert got["histograms"]["scaled_jacobian"] == expect["histograms"]["scaled_jacobian"]
