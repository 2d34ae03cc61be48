"""The section-flow solver's reported numbers against a hand computation (no chanmesh code)."""

from __future__ import annotations

import math

import pytest

from chanmesh.flow import default_grid, solve_section_flow
from chanmesh.geometry.section import SectionShape


def test_section_flow_reports_the_dean_number_of_its_bend():
    # 300 x 100 um rectangle, R = 1.5 mm, Q = 1e-9 m^3/s, rho 997, mu 0.89e-3, by hand:
    # A = 3e-8 m^2, U = 0.033333 m/s, D_h = 2 w h / (w + h) = 150 um,
    # Re = 997 * 0.033333 * 150e-6 / 0.89e-3 = 5.6011, De = Re sqrt(D_h / (2 R)) = 5.6011 * 0.22361
    # = 1.2525 (Dean 1928, in the form with the diameter; see tests/test_numbers_regime.py)
    shape = SectionShape(300e-6, 100e-6, 100e-6)
    flow = solve_section_flow(shape, 1.5e-3, 997.0, 0.89e-3, 1e-9, grid=default_grid(shape, 12, 6))
    assert flow.mean_velocity == pytest.approx(1e-9 / 3e-8, rel=1e-12, abs=0)
    assert flow.hydraulic_diameter == pytest.approx(150e-6, rel=1e-12, abs=0)
    assert flow.reynolds == pytest.approx(5.6011, rel=1e-4, abs=0)
    assert flow.dean == pytest.approx(1.2525, rel=1e-4, abs=0)
    # the flow it solved carries the asked rate: mean streamwise speed below the peak, ratio of a
    # 3:1 duct near 1.9 (White 2006 series: u_max / u_mean = 1.91 at aspect 1/3, from memory)
    assert 1.7 < flow.max_streamwise / flow.mean_velocity < 2.1
    assert math.isfinite(flow.dpds) and flow.dpds > 0


def test_bend_resistance_rises_with_the_dean_number():
    """Dean (1928): the secondary flow's inertia raises a bend's resistance above the straight
    duct's, by an amount growing with De (as De^4 at small De). The ratio dpds / dpds_straight
    must therefore grow from De = 1.3 to De = 19 and exceed 1 at the larger (measured 0.998 and
    1.0097; at De -> 0 a bend of R = 5 w sits slightly below 1, as more flow takes the shorter
    inner side)."""
    shape = SectionShape(300e-6, 100e-6, 100e-6)
    grid = default_grid(shape, 12, 6)
    slow = solve_section_flow(shape, 1.5e-3, 997.0, 0.89e-3, 1e-9, grid=grid)
    fast = solve_section_flow(shape, 1.5e-3, 997.0, 0.89e-3, 1.5e-8, grid=grid)
    assert fast.dean > 15 and slow.dean < 2
    for flow in (slow, fast):
        assert flow.dpds_ratio == pytest.approx(flow.dpds / flow.dpds_straight, rel=1e-12)
    assert fast.dpds_ratio > slow.dpds_ratio + 5e-3
    assert fast.dpds_ratio > 1.0
