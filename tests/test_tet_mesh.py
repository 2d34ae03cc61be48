"""The tetrahedral mesher against exact volumes and areas, and its labelling invariants."""

from __future__ import annotations

import math

import numpy as np
import pytest

from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.reference import reference_of
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.tet import estimate_tet_cells, mesh_tet
from chanmesh.meshing.verify import check_boundary_tagging
from tests.conftest import small_design

TRAPEZOID = {"shape": "trapezoid", "width": 200, "height_inner": 40, "height_outer": 70}


def _measured(design):
    mesh = mesh_tet(design)
    check_boundary_tagging(mesh)
    return mesh, group_measures(mesh)


def test_arc_volume_and_areas_are_exact_to_faceting():
    d = small_design("arc")
    mesh, m = _measured(d)
    # Pappus's centroid theorem: V = A R theta for a section centred on the centreline
    R, theta, w, h = 1e-3, math.pi / 2, 200e-6, 50e-6
    assert m["fluid"] == pytest.approx(w * h * R * theta, rel=2e-5)
    # exact: the ends are plane rectangles of the section area
    assert m["inlet"] == pytest.approx(w * h, rel=1e-12)
    assert m["outlet"] == pytest.approx(w * h, rel=1e-12)
    # annular sector, exact: wall area 2 R theta (w + h) for a centred rectangle
    assert m["wall"] == pytest.approx(2 * R * theta * (w + h), rel=5e-5)
    assert set(mesh.cell_counts()) == {"tetra", "triangle"}


def test_spiral_volume_is_area_times_centroid_path_length():
    # Archimedean arc length in closed form (handbook) times the section area; the rectangle's
    # centroid lies on the centreline, so its path is the centreline itself
    d = small_design("spiral")
    _, m = _measured(d)
    sp = centerline_of(d).segments[0]
    phi = lambda th: th + sp.r0 / sp.c  # noqa: E731
    g = lambda f: 0.5 * sp.c * (f * math.sqrt(1 + f * f) + math.asinh(f))  # noqa: E731
    length = g(phi(sp.theta_end)) - g(phi(0.0))
    assert m["fluid"] == pytest.approx(200e-6 * 50e-6 * length, rel=2e-5)
    assert m["inlet"] == pytest.approx(200e-6 * 50e-6, rel=1e-9)
    assert m["outlet"] == pytest.approx(200e-6 * 50e-6, rel=1e-9)


def test_trapezoid_centroid_is_off_the_centreline_and_pappus_holds():
    # Pappus: V = A * (R + u_c) * theta with u_c = w (b - a) / (6 (a + b)) (handbook trapezoid)
    d = small_design("arc", section=TRAPEZOID)
    _, m = _measured(d)
    a, b, w, R = 40e-6, 70e-6, 200e-6, 1e-3
    u_c = w * (b - a) / (6 * (a + b))
    assert u_c > 0
    assert m["fluid"] == pytest.approx(w * (a + b) / 2 * (R + u_c) * math.pi / 2, rel=2e-5)
    assert m["inlet"] == pytest.approx(w * (a + b) / 2, rel=1e-9)


@pytest.mark.parametrize("kind", ["serpentine", "chambers"])
def test_fused_families_match_their_reference(kind):
    d = small_design(kind)
    _, m = _measured(d)
    ref = reference_of(d)
    assert m["fluid"] == pytest.approx(ref.volume, rel=2e-5)
    assert m["wall"] == pytest.approx(ref.wall_area, rel=5e-5)
    assert m["inlet"] == pytest.approx(ref.inlet_area, rel=1e-9)


def test_split_outlet_patches_follow_the_fractions():
    d = small_design("spiral", outlets={"split": [0.3, 0.7]})
    mesh, m = _measured(d)
    assert [g.name for g in mesh.groups] == ["inlet", "outlet_1", "outlet_2", "wall", "fluid"]
    area = 200e-6 * 50e-6
    assert m["outlet_1"] == pytest.approx(0.3 * area, rel=1e-6)
    assert m["outlet_2"] == pytest.approx(0.7 * area, rel=1e-6)


def test_every_boundary_facet_is_tagged_exactly_once():
    mesh = mesh_tet(small_design("serpentine", section=TRAPEZOID))
    counts = check_boundary_tagging(mesh)
    assert counts["boundary_facets"] == sum(len(b.cells) for b in mesh.facets)


def test_building_in_millimetres_keeps_pipe_walls_on_the_exact_spiral():
    """OpenCASCADE tolerances are absolute (~1e-7 model units). Built in mm the spiral's
    outer wall nodes stay within 0.05 um of the exact offset curve r = r0 + c theta + w/2
    (measured in the section frame, asserted below); an absolute tolerance of that size in
    metres would be a large fraction of a micrometre-scale section."""
    d = small_design("spiral")
    mesh = mesh_tet(d)
    line = centerline_of(d)
    wall = mesh.facets_of("wall")[0]
    pts = mesh.points[np.unique(wall.cells)]
    # nearest centreline station for each wall node, by dense sampling then one Newton step
    s = np.linspace(0, line.length, 20001)
    c = line.points(s)
    idx = np.argmin(((pts[:, None, :2] - c[None, ::20, :2]) ** 2).sum(-1), axis=1) * 20
    for _ in range(3):
        t = line.tangents(s[idx])
        off = pts - line.points(s[idx])
        s_new = np.clip(s[idx] + np.einsum("ij,ij->i", off, t), 0, line.length)
        idx = np.searchsorted(s, s_new).clip(0, len(s) - 1)
        s[idx] = s_new
    u = np.einsum("ij,ij->i", pts - line.points(s[idx]), line.normals(s[idx]))
    side = np.abs(np.abs(u) - 100e-6) < 1e-6
    assert side.sum() > 50
    assert np.max(np.abs(np.abs(u[side]) - 100e-6)) < 5e-8


def test_grading_makes_wall_cells_smaller_than_core_cells():
    d = small_design("arc", mesh={"cells_across": 8, "wall_ratio": 1.3})
    mesh = mesh_tet(d)
    p = mesh.points
    tets = mesh.volumes[0].cells
    centre = p[tets].mean(axis=1)
    edge = np.linalg.norm(p[tets[:, 0]] - p[tets[:, 1]], axis=1)
    r = np.hypot(centre[:, 0], centre[:, 1])
    d_wall = np.minimum(100e-6 - np.abs(r - 1e-3), 25e-6 - np.abs(centre[:, 2]))
    near, core = edge[d_wall < 5e-6].mean(), edge[d_wall > 15e-6].mean()
    assert near < 0.8 * core


def test_estimate_is_within_a_factor_of_two():
    d = small_design("serpentine")
    n = mesh_tet(d).n_volume_cells
    assert 0.5 < estimate_tet_cells(d) / n < 2.0
