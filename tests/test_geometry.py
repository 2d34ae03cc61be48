"""Exact centrelines and analytic references against independent computations."""

from __future__ import annotations

import math

import numpy as np
import pytest

from chanmesh.geometry.centerline import Spiral, centerline_of
from chanmesh.geometry.plan import plan_outline
from chanmesh.geometry.reference import reference_of
from chanmesh.geometry.section import SectionShape
from tests.conftest import small_design


def test_spiral_arc_length_matches_a_fine_polyline():
    # closed-form Archimedean arc length (any handbook of plane curves) vs a 10^6-segment chord sum
    sp = Spiral(1e-3, 4e-4 / (2 * math.pi), 2 * math.pi * 2.5)
    th = np.linspace(0.0, sp.theta_end, 1_000_001)
    r = sp.r0 + sp.c * th
    chords = np.hypot(np.diff(r * np.cos(th)), np.diff(r * np.sin(th))).sum()
    assert sp.length == pytest.approx(chords, rel=1e-10)


def test_spiral_curvature_matches_finite_differences():
    sp = Spiral(1e-3, 4e-4 / (2 * math.pi), 2 * math.pi)
    s = np.linspace(1e-4, sp.length - 1e-4, 7)
    ds = 1e-7
    t1, t0 = sp.tangents(s + ds), sp.tangents(s - ds)
    t, dt = sp.tangents(s), (t1 - t0) / (2 * ds)
    kappa_fd = t[:, 0] * dt[:, 1] - t[:, 1] * dt[:, 0]
    assert np.allclose(sp.curvature(s), kappa_fd, rtol=1e-5)


@pytest.mark.parametrize("kind", ["arc", "spiral", "serpentine", "chambers"])
def test_centerline_is_continuous_with_unit_tangents(kind):
    line = centerline_of(small_design(kind, path={"inlet_length": 100, "outlet_length": 100}))
    s = np.linspace(0.0, line.length, 4001)
    p = line.points(s)
    step = np.linalg.norm(np.diff(p, axis=0), axis=1)
    assert np.allclose(step, line.length / 4000, rtol=1e-6)  # arc-length parametrised
    assert np.allclose(np.linalg.norm(line.tangents(s), axis=1), 1.0)
    b = line.breaks[1:-1]
    assert np.allclose(line.points(b - 1e-12), line.points(b + 1e-12), atol=1e-10)


def test_trapezoid_centroid_matches_polygon_formula():
    # centroid of a polygon by the shoelace-based formula (any computational-geometry handbook)
    shape = SectionShape(200e-6, 40e-6, 80e-6)
    x, y = shape.corners[:, 0], shape.corners[:, 1]
    xn, yn = np.roll(x, -1), np.roll(y, -1)
    cross = x * yn - xn * y
    area = cross.sum() / 2
    cx = ((x + xn) * cross).sum() / (6 * area)
    cy = ((y + yn) * cross).sum() / (6 * area)
    assert area == pytest.approx(shape.area, rel=1e-12)
    assert shape.centroid == pytest.approx((cx, cy), rel=1e-12)


def test_arc_reference_is_pappus():
    # Pappus's centroid theorem: V = A * 2 pi * R_c * (theta / 2 pi)
    d = small_design("arc")
    ref = reference_of(d)
    assert ref.volume == pytest.approx(200e-6 * 50e-6 * 1e-3 * math.pi / 2, rel=1e-12)
    # annular sector, exact: wall area 2 R theta (w + h)
    assert ref.wall_area == pytest.approx(2 * 1e-3 * math.pi / 2 * (250e-6), rel=1e-12)


def test_plan_outline_area_is_the_plan_area():
    for kind in ("arc", "chambers", "serpentine"):
        d = small_design(kind)
        assert plan_outline(d, spacing=1e-6).area == pytest.approx(reference_of(d).plan_area, rel=1e-4)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_close_pairs_match_a_kd_tree(seed):
    """The wall test's neighbour pairs (grid binning, numpy only) against scipy's
    cKDTree.query_pairs (a general reference library: Maneewongvatana & Mount 1999 sliding
    midpoint k-d tree), on scattered points, on a lattice whose spacing equals the radius (pairs
    exactly at the radius) and on two nearly touching walls of a channel-like strip."""
    from scipy.spatial import cKDTree

    from chanmesh.geometry.clearance import close_pairs

    rng = np.random.default_rng(seed)
    scattered = rng.uniform(-3e-3, 5e-3, size=(3000, 2))
    lattice = np.stack(np.meshgrid(np.arange(20) * 0.25, np.arange(15) * 0.25), -1).reshape(-1, 2) - 1.0
    x = np.linspace(0.0, 1e-2, 800)
    strip = np.concatenate([np.column_stack([x, 0 * x]), np.column_stack([x, 0 * x + 1e-5 * (1 + seed)])])
    for pts, radius in ((scattered, 2e-4), (lattice, 0.25), (strip, 2.1e-5)):
        expected = cKDTree(pts).query_pairs(radius, output_type="ndarray")
        expected = expected[np.lexsort((expected[:, 1], expected[:, 0]))]
        got = close_pairs(pts, radius)
        assert len(expected) > 0
        np.testing.assert_array_equal(got, expected)
    assert close_pairs(scattered[:1], 1.0).shape == (0, 2)
