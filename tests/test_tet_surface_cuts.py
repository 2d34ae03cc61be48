"""Unnamed cuts that split long channels for gmsh's surface step (``sections.surface_splits``):
where they go, and that the mesh keeps its groups, volume and wall area exactly as without."""

from __future__ import annotations

import hashlib
import math

import numpy as np
import pytest

from chanmesh.geometry.centerline import centerline_of
from chanmesh.gmshlayer import sections
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.tet import mesh_tet
from chanmesh.meshing.verify import check_boundary_tagging
from tests.conftest import small_design

W, H = 200e-6, 50e-6


def _spiral_length(d) -> float:  # noqa: ANN001
    """Archimedean arc length in closed form (handbook: s = c/2 [phi sqrt(1 + phi^2) + asinh phi])."""
    sp = centerline_of(d).segments[0]
    phi = lambda th: th + sp.r0 / sp.c  # noqa: E731
    g = lambda f: 0.5 * sp.c * (f * math.sqrt(1 + f * f) + math.asinh(f))  # noqa: E731
    return g(phi(sp.theta_end)) - g(phi(0.0))


def test_cuts_follow_the_wall_triangle_count_and_keep_off_joints_and_stations():
    d = small_design("spiral", path={"inlet_length": 400, "outlet_length": 400}, mesh={"sections": [0.5]})
    line = centerline_of(d)
    h_wall, h_core = 5e-6, 50e-6
    cuts = sections.surface_splits(d, h_wall, h_core)
    # equilateral triangles of side h cover sqrt(3)/4 h^2 each (elementary geometry); the walls
    # of a rectangle swept along the centreline have area 2 (w + h) L (Pappus, centred section)
    triangles = 4 / math.sqrt(3) * 2 * (W + H) * line.length / h_wall**2
    pieces = math.ceil(triangles / sections.TRIANGLES_PER_PIECE)
    assert pieces > 4
    assert len(cuts) <= pieces - 1
    assert len(cuts) >= pieces - 1 - 2 * (len(line.breaks) + 1)  # at most two dropped per joint or station
    keep_off = max(2 * h_core, W / 2)
    avoid = np.concatenate([line.breaks, [0.5 * line.length]])
    assert np.all(np.diff(cuts) > 0)
    assert np.abs(np.subtract.outer(cuts, avoid)).min() >= keep_off
    spacing = line.length / pieces
    assert np.allclose(np.diff(cuts) / spacing, np.round(np.diff(cuts) / spacing), atol=1e-9)


def test_short_channels_and_chamber_arrays_are_not_cut():
    assert sections.surface_splits(small_design("arc"), 20e-6, 50e-6) == []
    assert sections.surface_splits(small_design("chambers"), 1e-6, 50e-6) == []


@pytest.fixture
def cut_spiral(monkeypatch):  # noqa: ANN001, ANN201
    """A small spiral with one section (about 15 k tetrahedra), cut every 1,500 wall triangles."""
    monkeypatch.setattr(sections, "TRIANGLES_PER_PIECE", 1500)
    d = small_design("spiral", mesh={"sections": [0.5], "first_cell": 30})
    return d, mesh_tet(d)


def test_cut_mesh_keeps_its_groups_volume_and_wall_area(cut_spiral):
    d, mesh = cut_spiral
    assert mesh.info["surface_pieces"] >= 4
    assert [g.name for g in mesh.groups] == ["inlet", "outlet", "wall", "section_1", "fluid"]
    check_boundary_tagging(mesh)  # every boundary facet in exactly one group; cut faces are interior
    m = group_measures(mesh)
    length = _spiral_length(d)
    # volume: section area times centroid path length (Pappus, as test_tet_mesh.py); wall: 2 (w + h) L,
    # which a cut face wrongly taken for wall would exceed by w h per cut
    assert m["fluid"] == pytest.approx(W * H * length, rel=2e-5)
    assert m["wall"] == pytest.approx(2 * (W + H) * length, rel=5e-5)
    assert m["wall"] < 2 * (W + H) * length + 0.5 * W * H
    assert m["section_1"] == pytest.approx(W * H, rel=1e-4)


def test_cut_mesh_is_the_same_to_the_byte_every_run(cut_spiral):
    d, first = cut_spiral

    def digest(mesh) -> str:  # noqa: ANN001
        h = hashlib.sha256(mesh.points.tobytes())
        for b in mesh.volumes + mesh.facets:
            h.update(b.cells.tobytes())
            h.update(b.tags.tobytes())
        return h.hexdigest()

    assert digest(mesh_tet(d)) == digest(first)
