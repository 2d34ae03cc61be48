"""The four-cell branch of a curved square duct (chanmesh.flow.branch) against published results.

Winters (1987, J. Fluid Mech. 180:343-369, abstract, checked): for a square section, symmetric
two- and four-cell flows exist in distinct ranges of the axial pressure gradient, connected
through limit points; continuation from rest gives the two-cell flow. The Dean number values
below are from memory (Bara, Nandakumar & Masliyah 1992, J. Fluid Mech. 244: curvature ratio
15.1, four-cell flows from a limit point at Dn = Re (a/R)^0.5 ~ 113; their table could not be
found through the project's search), hence the wide band.
"""

import math

import pytest

from chanmesh.errors import ChanmeshError
from chanmesh.flow import default_grid, solve_section_flow
from chanmesh.flow.branch import FourCellNotFound
from chanmesh.geometry.section import SectionShape

SIDE = 100e-6
RHO, MU = 1000.0, 1e-3
RADIUS = 15 * SIDE
SQUARE = SectionShape(SIDE, SIDE, SIDE)


def _flow_at(k: float) -> float:
    """Flow rate (m^3/s) at K = Re sqrt(D_h / R) (= Bara et al.'s Dn for a square, D_h = a)."""
    re = k * math.sqrt(RADIUS / SIDE)
    return re * MU / (RHO * SIDE) * SIDE * SIDE


def test_four_cell_state_inside_the_published_range_and_two_cells_on_the_primary_branch():
    grid = default_grid(SQUARE, 12, 12)
    q = _flow_at(150.0)  # inside the four-cell range (Bara et al. 1992, from memory: K > 113)
    primary = solve_section_flow(SQUARE, RADIUS, RHO, MU, q, grid=grid, estimate_error=False)
    four = solve_section_flow(SQUARE, RADIUS, RHO, MU, q, grid=grid, estimate_error=False, branch="four-cell")
    assert primary.cell_count == 2  # continuation from rest: the two-cell flow (Winters 1987)
    assert four.cell_count == 4  # Winters 1987: a symmetric four-cell flow at the same gradient range
    assert four.solver["full_residual"] < 1e-8  # an unforced solution of the whole (not only symmetric) problem
    # the two extra cells sit at the outer wall, mirror images about mid-height
    outer = sorted(four.vortices, key=lambda v: -v["centre_u_m"])[:2]
    assert all(v["centre_u_m"] > 0.25 * SIDE for v in outer)
    assert abs(outer[0]["centre_z_m"] + outer[1]["centre_z_m"]) < 1e-3 * SIDE
    assert abs(outer[0]["strength_m2_s"] - outer[1]["strength_m2_s"]) < 1e-6 * outer[0]["strength_m2_s"]
    # the path went round the two limit points of the symmetric branch; the lower one, where the
    # four-cell flows begin, near Bara et al.'s Dn ~ 113 (from memory; 12 x 12 grid, band +-15 %)
    upper, lower = (de * math.sqrt(2.0) for de in four.solver["limit_points_dean"])  # De -> K
    assert upper > lower
    assert 113 * 0.85 < lower < 113 * 1.15


def test_no_four_cell_state_below_the_limit_point_is_refused():
    grid = default_grid(SQUARE, 12, 12)
    with pytest.raises(FourCellNotFound, match="no four-cell state"):
        solve_section_flow(SQUARE, RADIUS, RHO, MU, _flow_at(100.0), grid=grid, estimate_error=False,
                           branch="four-cell")


def test_four_cell_branch_needs_a_bent_rectangle():
    with pytest.raises(ChanmeshError, match="rectangular section"):
        solve_section_flow(SectionShape(SIDE, SIDE, 0.8 * SIDE), RADIUS, RHO, MU, _flow_at(150.0), branch="four-cell")
    with pytest.raises(ChanmeshError, match="cells-high"):
        solve_section_flow(SQUARE, RADIUS, RHO, MU, _flow_at(150.0), grid=default_grid(SQUARE, 12, 11),
                           branch="four-cell")
