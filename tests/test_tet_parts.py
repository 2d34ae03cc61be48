"""A long channel's tetrahedra meshed in parts and joined at the seams (``gmshlayer.partition``,
``meshing.tet_merge``): the joined mesh conforms (VTK finds no boundary inside it), keeps its
groups, volume and areas, is the same in child processes as here, and a seam that does not
match sends the channel back to one part."""

from __future__ import annotations

import numpy as np
import pytest
import pyvista as pv

import chanmesh.meshing.tet_process as tp
from chanmesh.geometry.reference import reference_of
from chanmesh.gmshlayer import partition, sections
from chanmesh.meshing import tet
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.verify import check_boundary_tagging
from tests.conftest import small_design


def test_seams_share_the_pieces_evenly():
    assert partition.seam_indices(37, 2) == [18]  # 38 pieces: 19 before the seam, 19 after
    assert partition.part_seams(37, 0, 2) == (None, 18) and partition.part_seams(37, 1, 2) == (18, None)
    assert partition.part_seams(1, 0, 2) == (None, 0) and partition.part_seams(1, 1, 2) == (0, None)
    assert partition.parts_for([]) == 1 and partition.parts_for([5.0]) == partition.PARTS
    assert partition.seam_indices(11, 3) == [3, 7]  # 12 pieces: 4, 4 and 4
    assert partition.part_seams(11, 1, 3) == (3, 7)


@pytest.fixture
def cut_spiral(monkeypatch):  # noqa: ANN001, ANN201
    """A small spiral with one section (about 15 k tetrahedra), cut every 1,500 wall triangles,
    meshed in two parts here and, with one part, as a reference."""
    monkeypatch.setattr(sections, "TRIANGLES_PER_PIECE", 1500)
    d = small_design("spiral", mesh={"sections": [0.5], "first_cell": 30})
    two = tet.mesh_tet(d)
    with monkeypatch.context() as m:
        m.setattr(partition, "PARTS", 1)
        one = tet.mesh_tet(d)
    return d, two, one


def _grid(mesh) -> pv.UnstructuredGrid:  # noqa: ANN001
    tets = mesh.volumes[0].cells
    cells = np.hstack([np.full((len(tets), 1), 4), tets]).ravel()
    return pv.UnstructuredGrid(cells, np.full(len(tets), pv.CellType.TETRA, np.uint8), mesh.points)


def test_joined_mesh_conforms_and_keeps_groups_volume_and_areas(cut_spiral):
    d, two, one = cut_spiral
    assert two.info["mesh_parts"] == 2 and one.info["mesh_parts"] == 1
    assert two.info["surface_pieces"] == one.info["surface_pieces"] >= 4
    assert two.groups == one.groups
    check_boundary_tagging(two)  # every boundary facet in exactly one group
    # VTK (through pyvista) finds the outer surface of the joined tetrahedra: a seam whose two
    # sides did not share their nodes would add its triangles twice to that surface
    grid = _grid(two)
    triangles = next(b for b in two.facets if b.type == "triangle")
    outer = int((triangles.tags != two.group("section_1").tag).sum())  # the section lies inside
    assert grid.extract_surface(algorithm="dataset_surface").n_cells == outer
    assert grid.connectivity().point_data["RegionId"].max() == 0  # one piece of fluid
    assert len(np.unique(two.points, axis=0)) == len(two.points)  # no node twice
    a, b = group_measures(two), group_measures(one)
    for name in ("fluid", "wall", "inlet", "outlet", "section_1"):
        assert a[name] == pytest.approx(b[name], rel=1e-9), name  # the same solid, meshed apart or not
    assert grid.volume == pytest.approx(a["fluid"], rel=1e-12)  # VTK's volume of the same cells


def test_parts_in_child_processes_give_the_same_mesh(cut_spiral):
    d, two, _ = cut_spiral
    child = tp.mesh_tet_isolated(d)  # the splits are computed here, so the patched piece size applies
    assert child.info["mesh_parts"] == 2
    assert np.array_equal(child.points, two.points)
    assert [(x.type, x.cells.tolist(), x.tags.tolist()) for x in child.volumes + child.facets] == \
           [(x.type, x.cells.tolist(), x.tags.tolist()) for x in two.volumes + two.facets]


def test_a_seam_that_does_not_match_falls_back_to_one_part(cut_spiral, monkeypatch):
    d, _, one = cut_spiral

    def moved_seam(design, scale, splits, parts, progress):  # noqa: ANN001, ANN202
        done = tet._run_here(design, scale, splits, parts, progress)
        if parts > 1:
            node = done[1].seams[0].nodes[0]
            done[1].mesh.points[node] += 1e-7  # 0.1 um: far above round-off, far below a cell
        return done

    mesh = tet.mesh_tet(d, run_parts=moved_seam)
    assert mesh.info["mesh_parts"] == 1
    assert np.array_equal(mesh.points, one.points)


@pytest.mark.parametrize("kind, extra", [
    ("arc", {"path": {"angle": 270}, "outlets": {"split": [0.3, 0.7]}}),  # split outlet, seam on a bend
    ("serpentine", {"mesh": {"sections": [0.3, 0.7]}}),  # named sections beside the seam
    ("spiral", {"section": {"shape": "trapezoid", "width": 200, "height_inner": 40, "height_outer": 60}}),
])
def test_cut_designs_join_in_two_parts_with_their_exact_volume(kind, extra, monkeypatch):
    monkeypatch.setattr(sections, "TRIANGLES_PER_PIECE", 1500)
    mesh_kw = {"first_cell": 30, **extra.pop("mesh", {})}
    d = small_design(kind, mesh=mesh_kw, **extra)
    mesh = tet.mesh_tet(d)
    assert mesh.info["mesh_parts"] == 2  # the seams matched: no fall-back to one part
    check_boundary_tagging(mesh)
    # the solid's volume in closed form (Pappus's centroid theorem, geometry/reference.py);
    # tetrahedra with flat faces fall short of a curved wall by about (h/R)^2
    assert group_measures(mesh)["fluid"] == pytest.approx(reference_of(d).volume, rel=2e-4)
