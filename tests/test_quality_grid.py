"""Quality figures of a swept hexahedral mesh read off its grid (``post.quality_grid``).

References: VTK's vtkMeshQuality (the Verdict library, Stimpson et al. 2007) through pyvista for
the per-cell scaled Jacobian and edge ratio, and the general path of ``post.quality`` (itself
checked against VTK in ``test_post_quality.py``) for every figure, to the bit.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
import pyvista as pv
from _hex_designs import TRAPEZOID, hex_design

import chanmesh.post.quality as quality
from chanmesh.meshing.faces import face_table
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.sweep_grid import proven_grid
from chanmesh.meshing.verify import check_boundary_tagging
from chanmesh.post.quality_grid import grid_figures

CASES = {
    "spiral, trapezoid": dict(path="spiral", section=TRAPEZOID, mesh="first_cell = 3"),
    "chambers (absent columns)": dict(path="chambers"),
    "one-sided chambers": dict(path="chambers_one_sided"),
    "arc, one cell high": dict(path="arc", mesh="cells_high = 1\ncells_across = 3"),
}


def _mesh(case: str, jiggle: float = 0.0) -> ChannelMesh:
    mesh = mesh_hex(hex_design(**CASES[case]))
    if jiggle:  # far from ideal, some cells inverted: every sign and branch is exercised
        mesh.points = mesh.points + np.random.default_rng(3).normal(scale=jiggle, size=mesh.points.shape)
    return mesh


def _general(mesh: ChannelMesh) -> dict:
    """The figures by the general path: the same mesh without its grid (faces paired by hashing)."""
    return quality.mesh_quality(dataclasses.replace(mesh, sweep=None)).as_dict()


@pytest.mark.parametrize("jiggle", [0.0, 4e-6])
@pytest.mark.parametrize("case", list(CASES))
def test_grid_figures_equal_the_general_path_to_the_bit(case, jiggle):
    mesh = _mesh(case, jiggle)
    check_boundary_tagging(mesh)  # the wall cells then come from the check's groups, not a pairing
    assert proven_grid(mesh) is not None  # the grid path is taken
    assert face_table(mesh, 4).tags_of_boundary(mesh) is not None
    if case.startswith("chambers"):
        assert mesh.sweep.columns is not None and not mesh.sweep.columns.all()
    got = quality.mesh_quality(mesh).as_dict()
    assert got == _general(mesh)  # every figure and histogram, exactly
    if jiggle:
        assert got["scaled_jacobian_min"] < 0.5


def test_grid_scaled_jacobian_agrees_with_vtk_and_edge_ratio_with_its_definition():
    # VTK vtkMeshQuality (Verdict, Stimpson et al. 2007): hexahedron scaled Jacobian, cell by
    # cell, on a jiggled trapezoid spiral. VTK's hexahedron "max_edge_ratio" compares principal
    # axes, not edges, so the edge ratio is checked against its definition: the longest of the
    # twelve edges over the shortest (numpy on the cells' own nodes).
    mesh = _mesh("spiral, trapezoid", 4e-6)
    assert proven_grid(mesh) is not None
    chunks: list[np.ndarray] = []
    got = grid_figures(mesh.points, mesh.sweep, mesh.n_volume_cells, 1000, chunks.append)
    assert [len(c) for c in chunks[:-1]] == [1000] * (len(chunks) - 1)  # chunks in cell order
    sj = np.concatenate(chunks)
    cells = mesh.volumes[0].cells
    grid = pv.UnstructuredGrid({pv.CellType.HEXAHEDRON: cells}, mesh.points)
    vtk_sj = np.asarray(grid.cell_quality("scaled_jacobian")["scaled_jacobian"])
    assert np.allclose(sj, vtk_sj, atol=1e-12)
    assert (vtk_sj < 0).any()  # inverted cells too
    edges = [(0, 1), (1, 2), (2, 3), (3, 0), (4, 5), (5, 6), (6, 7), (7, 4), (0, 4), (1, 5), (2, 6), (3, 7)]
    lengths = np.stack([np.linalg.norm(mesh.points[cells[:, b]] - mesh.points[cells[:, a]], axis=1) for a, b in edges])
    assert np.allclose(got.edge_ratio, lengths.max(axis=0) / lengths.min(axis=0), rtol=1e-6)  # float32
    assert got.edge_ratio_max == pytest.approx(float((lengths.max(axis=0) / lengths.min(axis=0)).max()), rel=1e-12)


def test_grid_non_orthogonality_of_a_sheared_straight_duct():
    """The grid of a one-cell-high arc laid out as a box grid (along x, across y, up z), then
    sheared x -> x + a z: every cell is the same parallelepiped. The faces between neighbours
    along x have the normal (1, 0, -a) and the centre line (dx, 0, 0), so the angle is atan(a);
    across, the angle is 0 (elementary geometry)."""
    a = 0.25
    mesh = _mesh("arc, one cell high")
    nk, ni, nj = mesh.sweep.shape
    k, i, j = np.meshgrid(np.arange(nk + 1), np.arange(ni + 1), np.arange(nj + 1), indexing="ij")
    x, y, z = k.ravel() * 1e-5, i.ravel() * 2e-5, j.ravel() * 3e-5
    mesh.points = np.column_stack([x + a * z, y, z])  # the grid's own node order
    q = quality.mesh_quality(mesh)
    assert proven_grid(mesh) is not None
    assert q.non_orthogonality_max == pytest.approx(math.degrees(math.atan(a)), rel=1e-9)
    assert q.as_dict() == _general(mesh)


def test_cells_off_the_grid_take_the_general_path():
    """Cells listed in another order are not the grid's: the face table is paired by hashing
    and the figures (order-free ones) stay the same."""
    mesh = _mesh("chambers (absent columns)")
    expect = quality.mesh_quality(mesh).as_dict()
    order = np.random.default_rng(5).permutation(mesh.n_volume_cells)
    block = mesh.volumes[0]
    shuffled = dataclasses.replace(mesh, volumes=[dataclasses.replace(block, cells=block.cells[order], tags=block.tags[order])])
    assert proven_grid(shuffled) is None
    got = quality.mesh_quality(shuffled).as_dict()
    for key in ("scaled_jacobian_min", "aspect_ratio_max", "non_orthogonality_max", "wall_cell_min", "wall_cell_max"):
        assert got[key] == expect[key], key
    assert got["scaled_jacobian_mean"] == pytest.approx(expect["scaled_jacobian_mean"], rel=1e-12)


def test_wall_groups_from_the_check_are_dropped_when_the_facets_change():
    """The check leaves each boundary face's group on the face table; once a facet block is
    given a new tag array (here a copy, as any retagging makes) those groups are not read: the
    wall cells are found by pairing, as without the check, with the same figures."""
    mesh = _mesh("spiral, trapezoid")
    check_boundary_tagging(mesh)
    table = face_table(mesh, 4)
    assert table.tags_of_boundary(mesh) is not None
    block = mesh.facets[0]
    mesh.facets[0] = dataclasses.replace(block, tags=block.tags.copy())
    assert table.tags_of_boundary(mesh) is None
    assert quality.mesh_quality(mesh).as_dict() == _general(mesh)
