"""The section-flow solver (chanmesh.flow) against outside references: the rectangular-duct
series for the straight limit, and the known small-Dean-number behaviour of curved ducts."""

from __future__ import annotations

import math

import numpy as np
import pytest

from chanmesh.flow import default_grid, flow_range, solve_section_flow
from chanmesh.geometry.section import SectionShape
from tests.synthetic_flow import duct_flow_rate, duct_profile

RHO, MU = 997.0, 0.89e-3
RECT = SectionShape(300e-6, 100e-6, 100e-6)


def test_straight_limit_matches_white_series():
    q = 1.5e-8
    flow = solve_section_flow(RECT, None, RHO, MU, q, grid=default_grid(RECT, 24, 12))
    # White F.M. (2006) Viscous Fluid Flow, 3rd ed., eq. 3-48 (profile) and 3-49 (flow rate):
    # the flow rate the series gives for the solver's driving gradient is the one asked
    g_over_mu = flow.dpds / MU
    assert duct_flow_rate(RECT.width, RECT.mean_height, g_over_mu) == pytest.approx(q, rel=1e-4)
    exact = duct_profile(flow.points[:, 0], flow.points[:, 1], RECT.width, RECT.mean_height, g_over_mu)
    assert np.max(np.abs(flow.streamwise - exact)) < 1e-4 * exact.max()
    assert flow.secondary_max == 0.0 or flow.secondary_max < 1e-12 * flow.mean_velocity
    assert flow.dpds_ratio == pytest.approx(1.0, abs=1e-12)
    assert flow.vortices == ()
    assert flow.dean is None


def test_large_radius_approaches_the_straight_duct():
    """Axisymmetric consistency: at R = 1000 w the bent duct's gradient is the straight one to O(w/R)
    (Dean 1928: the curvature correction is O(De^4) plus O(w/R) terms), and the secondary flow is weak."""
    q = 1.0e-9
    grid = default_grid(RECT, 12, 6)
    bent = solve_section_flow(RECT, 1000 * RECT.width, RHO, MU, q, grid=grid)
    straight = solve_section_flow(RECT, None, RHO, MU, q, grid=grid)
    assert bent.dpds == pytest.approx(straight.dpds, rel=2e-3)
    assert bent.max_streamwise == pytest.approx(straight.max_streamwise, rel=2e-3)
    assert bent.secondary_max < 1e-3 * bent.mean_velocity


def test_secondary_speed_grows_as_velocity_squared_at_small_dean():
    """Dean (1928), Phil. Mag. 5, small-Dean-number series: the secondary flow is driven by the
    centrifugal force rho w^2 / R and, while inertia barely changes w, its speed grows as U^2
    (the first term of the series in De)."""
    grid = default_grid(RECT, 12, 6)
    flows = flow_range(RECT, 1.5e-3, RHO, MU, [1e-10, 2e-10, 4e-10], grid=grid)
    speeds = np.array([f.secondary_max for f in flows])
    slope = np.polyfit(np.log([f.mean_velocity for f in flows]), np.log(speeds), 1)[0]
    assert flows[-1].dean < 0.6
    assert slope == pytest.approx(2.0, abs=0.01)


def test_dean_vortices_turn_as_expected_and_mirror_for_a_right_turn():
    """Two counter-rotating cells, outward flow at mid-height: looking downstream the upper cell of a
    left turn turns counter-clockwise (Dean 1928; Berger, Talbot & Yao 1983, Annu. Rev. Fluid Mech.
    15, fig. 1). A right turn is the mirror image."""
    grid = default_grid(RECT)
    left = solve_section_flow(RECT, 1.5e-3, RHO, MU, 1.5e-8, grid=grid)
    right = solve_section_flow(RECT, -1.5e-3, RHO, MU, 1.5e-8, grid=grid)
    assert [v["sense"] for v in left.vortices] == ["counter-clockwise", "clockwise"]
    assert [v["sense"] for v in right.vortices] == ["clockwise", "counter-clockwise"]
    assert left.vortices[0]["centre_z_m"] > 0 > left.vortices[1]["centre_z_m"]
    # the cells are flat-topped across a 3:1 section, so their centres are ill-conditioned in u:
    # mirror images within 1 % of the width (the grid's diagonals are not mirror-symmetric)
    assert right.vortices[0]["centre_u_m"] == pytest.approx(-left.vortices[0]["centre_u_m"], abs=0.01 * RECT.width)
    # the streamwise peak moves toward the outer wall (u > 0 for a left turn)
    assert left.u_of_streamwise_max > 0 > right.u_of_streamwise_max
    mid = np.abs(left.points[:, 1]) < 1e-9
    assert np.mean(left.secondary_u[mid & (np.abs(left.points[:, 0]) < 0.3 * RECT.width)]) > 0
    assert left.secondary_max == pytest.approx(right.secondary_max, rel=1e-3)


def test_grid_discretisation_on_a_coarse_grid_is_close_to_the_reference():
    """The low-order 'grid' discretisation (MINI) tends to the reference with refinement (scikit-fem
    elements; Arnold, Brezzi & Fortin 1984, Calcolo 21: MINI converges at first order in H1)."""
    ref = solve_section_flow(RECT, 1.5e-3, RHO, MU, 1.5e-8, grid=default_grid(RECT, 12, 6))
    errs = []
    for n in (2, 4):
        low = solve_section_flow(RECT, 1.5e-3, RHO, MU, 1.5e-8, grid=default_grid(RECT, 6 * n, 2 * n), discretisation="grid")
        errs.append(abs(low.secondary_mean / ref.secondary_mean - 1))
        assert low.flow_rate == pytest.approx(ref.flow_rate, rel=1e-12)
    assert errs[1] < 0.6 * errs[0]
    assert math.isfinite(errs[1])
