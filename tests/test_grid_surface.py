"""The 3D picture's surface read off a swept mesh's grid (report/grid_surface.py).

Checked against VTK (through pyvista), a general reference library that finds a hexahedral
mesh's boundary on its own (``extract_surface``) and measures polygon areas
(``compute_cell_sizes``): on straight walls the decimated surface must have the full
boundary's area and extent; on curved walls it is a polygon inscribed in the fine one, short
by at most the inscribed-polygon deficit 1 - sin(a)/a <= a^2/6 for its widest angular step a
(the area of an annular sector against the trapezoid on its chords: (r2^2 - r1^2) a / 2
against (r2^2 - r1^2) sin(a) / 2; elementary geometry, Taylor series of sin).
"""

from __future__ import annotations

import numpy as np
import pytest

from _hex_designs import TRAPEZOID, hex_design
from chanmesh.meshing.registry import mesher_for
from chanmesh.report.drawing_surface import surface_facets
from chanmesh.report.grid_surface import decimated_surface, grid_surface
from chanmesh.report.view3d import closeup_surface, mesh_picture, port_names

pv = pytest.importorskip("pyvista")


def _mesh(path: str, section: str | None = None):
    design = hex_design(path, section or 'shape = "rectangle"\nwidth = 200\nheight = 60',
                        mesh="sections = [0.5]", outlets="split = [0.5, 0.5]")
    return design, mesher_for(design).mesh(design)


def _polydata(points: np.ndarray, blocks: list[np.ndarray]):
    faces = np.concatenate([np.column_stack([np.full(len(c), c.shape[1]), c]).ravel() for c in blocks])
    return pv.PolyData(points, faces)


def _area(poly) -> float:
    return float(poly.compute_cell_sizes(length=False, area=True, volume=False)["Area"].sum())


def _vtk_boundary(mesh):
    """The mesh's boundary as VTK finds it from the hexahedra alone."""
    grid = pv.UnstructuredGrid({pv.CellType.HEXAHEDRON: mesh.volumes[0].cells}, mesh.points)
    return grid.extract_surface(algorithm="dataset_surface")


def _decimated(mesh, monkeypatch, fraction: int = 5):
    import chanmesh.report.drawing_surface as ds

    monkeypatch.setattr(ds, "FEW", 20)  # small meshes: let every group decimate well below its size
    grid = grid_surface(mesh)
    assert grid is not None
    total = sum(grid.counts.values())
    surface = decimated_surface(grid, mesh.points, total // fraction)
    assert surface.merged and surface.facets_in_mesh == total
    assert set(surface.polygons) == set(grid.counts)  # every group drawn, ports and sections included
    for name, blocks in surface.polygons.items():  # each within its share (drawing_surface.group_share)
        assert sum(len(c) for c in blocks) <= max(total // fraction * grid.counts[name] // total, min(grid.counts[name], 20))
    return grid, surface


@pytest.mark.parametrize("path", ["chambers", "chambers_one_sided"])
def test_straight_walls_keep_vtks_boundary_area_and_extent(path, monkeypatch):
    _, mesh = _mesh(path)
    grid, surface = _decimated(mesh, monkeypatch)
    assert surface.facets < sum(grid.counts.values()) / 3
    full = _vtk_boundary(mesh)
    boundary = [c for name, blocks in surface.polygons.items() if not name.startswith("section") for c in blocks]
    ours = _polydata(surface.points, boundary)
    assert _area(ours) == pytest.approx(_area(full), rel=1e-9, abs=0)  # plane walls: no chord is short
    assert np.allclose(ours.bounds, full.bounds, rtol=0, atol=1e-12)
    for name in surface.polygons:  # a section keeps its whole area too, VTK measuring both
        if name.startswith("section"):
            fine = _polydata(mesh.points, [b.cells for b in mesh.facets_of(name)])
            assert _area(_polydata(surface.points, surface.polygons[name])) == pytest.approx(_area(fine), rel=1e-9, abs=0)


def test_curved_walls_are_inscribed_within_the_polygon_deficit(monkeypatch):
    _, mesh = _mesh("arc", TRAPEZOID)
    grid, surface = _decimated(mesh, monkeypatch, fraction=3)
    full = _vtk_boundary(mesh)
    boundary = [c for name, blocks in surface.polygons.items() if not name.startswith("section") for c in blocks]
    ours = _polydata(surface.points, boundary)
    # the arc turns about the origin: every node of a layer lies at the layer's angle
    angles = np.unique(np.round(np.arctan2(surface.points[:, 1], surface.points[:, 0]), 9))
    a = float(np.diff(angles).max())
    assert 0 < a < 0.5
    assert _area(full) * (1 - a * a / 6) <= _area(ours) <= _area(full) * (1 + 1e-12)
    outer = float(np.hypot(mesh.points[:, 0], mesh.points[:, 1]).max())
    sagitta = outer * (1 - np.cos(a / 2))  # how far a chord's middle lies inside its arc
    # bounds (x min, x max, y min, y max, z min, z max): inside VTK's by at most a sagitta, z the same
    assert np.all(np.array(ours.bounds) - np.array(full.bounds) <= [sagitta, 1e-15, sagitta, 1e-15, 1e-15, 1e-15])
    assert np.all(np.array(full.bounds) - np.array(ours.bounds) <= [1e-15, sagitta, 1e-15, sagitta, 1e-15, 1e-15])


@pytest.mark.parametrize("path", ["arc", "chambers_one_sided", "spiral"])
def test_close_ups_from_the_grid_choose_the_facets_the_facet_path_chooses(path):
    design, mesh = _mesh(path)
    facets = surface_facets(mesh)
    for port in port_names(mesh):
        from_grid, view_grid = closeup_surface(mesh, design, port)
        from_facets, view_facets = closeup_surface(mesh, design, port, facets=facets)
        assert np.allclose(view_grid, view_facets, rtol=0, atol=1e-12)
        for surface in (from_grid, from_facets):
            assert not surface.merged
        assert list(from_grid.polygons) == list(from_facets.polygons)

        def polygons(s, name):
            return {frozenset(map(tuple, np.round(s.points[c], 9))) for b in s.polygons[name] for c in b}

        for name in from_grid.polygons:
            assert polygons(from_grid, name) == polygons(from_facets, name)


def test_a_mesh_that_does_not_follow_its_grid_is_drawn_from_its_facets(monkeypatch):
    design, mesh = _mesh("arc")
    assert grid_surface(mesh) is not None
    shuffled = mesher_for(design).mesh(design)
    shuffled.volumes[0].cells = shuffled.volumes[0].cells[::-1].copy()  # same cells, another order
    assert grid_surface(shuffled) is None
    relabelled = mesher_for(design).mesh(design)
    wall, inlet = relabelled.group("wall").tag, relabelled.group("inlet").tag
    tags = relabelled.facets[0].tags
    tags[np.flatnonzero(tags == wall)[0]] = inlet  # the inlet is no longer one node layer's rectangle
    assert grid_surface(relabelled) is None
    import chanmesh.report.view3d as view3d

    monkeypatch.setattr(view3d, "DRAW_LIMIT", 200)
    for m in (mesh, shuffled):  # both drawn, merged, with every group in the legend
        assert mesh_picture(m, design, 640, 480)[:8] == b"\x89PNG\r\n\x1a\n"
