"""Section flow against published and independent results: measured convergence order, the
curved square duct's friction ratio, and a trapezoid against an independent scikit-fem solve."""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.flow import default_grid, solve_section_flow
from chanmesh.geometry.section import SectionShape

RHO, MU = 1000.0, 1e-3
A = 100e-6
SQUARE = SectionShape(A, A, A)


def _flow_at(re: float) -> float:
    """Flow rate of the square duct (D_h = A) at Reynolds number ``re``."""
    return re * MU / (RHO * A) * A * A


def test_measured_convergence_order_on_three_grids():
    """Observed order p = log(e_1 / e_2) / log 2 from three grids (Roache 1998, Verification and
    Validation in Computational Science and Engineering, eq. 5.4.1; Celik et al. 2008, J. Fluids
    Eng. 130, 078001). P2-P1 velocity converges at h^3 in L2 (Brenner & Scott 2008, The Mathematical
    Theory of Finite Element Methods, ch. 12), so the area-weighted mean secondary speed, an
    integral, shows about 3; measured 2.9. The nodal maximum converges erratically (sampled at nodes)
    and is not used for the order."""
    q, radius = _flow_at(100.0), 10 * A
    values = []
    hs = []
    for n in (4, 8, 16):
        f = solve_section_flow(SQUARE, radius, RHO, MU, q, grid=default_grid(SQUARE, n, n, ratio=1.0))
        values.append(f.secondary_mean)
        hs.append(1.0 / n)
    e = np.abs(np.diff(values))
    order = np.polyfit(np.log(hs[:2]), np.log(e), 1)[0]
    assert 2.5 < order < 3.5
    assert e[1] < 0.01 * values[-1]


def test_curved_square_duct_friction_ratio():
    """Friction ratio f_curved / f_straight of a square duct at R / D_h = 100 rises with the Dean
    number K = Re sqrt(D_h / R): about 1.18 at K = 50 and 1.37 at K = 100 (Cheng, Lin & Ou 1976,
    J. Fluids Eng. 98, 41-48, fully developed curved square duct, values from memory, not checked
    against the paper: its table was not found by the project's search in December 2026;
    tolerance 8 %). Two counter-rotating cells on this branch (Winters 1987, J. Fluid Mech. 180,
    343-369, abstract: the two-cell flow is the primary branch and the only stable one; the
    four-cell flows lie on other branches)."""
    radius = 100 * A
    grid = default_grid(SQUARE, 10, 10)
    low = solve_section_flow(SQUARE, radius, RHO, MU, _flow_at(500.0), grid=grid)
    high = solve_section_flow(SQUARE, radius, RHO, MU, _flow_at(1000.0), grid=grid, initial=low)
    assert low.dpds_ratio == pytest.approx(1.18, rel=0.08)
    assert high.dpds_ratio == pytest.approx(1.37, rel=0.08)
    assert low.cell_count == 2 and high.cell_count == 2
    # outward flow at mid-height, cells centred above and below it (Dean 1928)
    assert high.vortices[0]["centre_z_m"] == pytest.approx(-high.vortices[1]["centre_z_m"], abs=0.02 * A)


def test_straight_trapezoid_matches_an_independent_scikit_fem_solve():
    """Straight trapezoid (40 and 70 um high, 200 um wide): Poisson mu lap w = -G with w = 0 on the
    walls solved independently with scikit-fem's cubic Lagrange triangles on its own refined mesh
    (Gustafsson & McBain 2020, J. Open Source Softw. 5, 2369); flow rates agree to 1e-4."""
    from skfem import Basis, BilinearForm, ElementTriP3, LinearForm, MeshTri, condense, solve
    from skfem.helpers import dot, grad

    shape = SectionShape(200e-6, 40e-6, 70e-6)
    q = 1e-9
    flow = solve_section_flow(shape, None, RHO, MU, q, grid=default_grid(shape, 24, 12))

    mesh = MeshTri.init_tensor(np.linspace(0, 1, 13), np.linspace(0, 1, 7)).refined(2)
    u = (mesh.p[0] - 0.5) * shape.width
    top = np.asarray(shape.top(u))
    mesh = MeshTri(np.array([u, shape.bottom + mesh.p[1] * (top - shape.bottom)]), mesh.t)
    basis = Basis(mesh, ElementTriP3())

    @BilinearForm
    def lap(w, v, _):  # noqa: ANN001, ANN202
        return dot(grad(w), grad(v))

    @LinearForm
    def one(v, _):  # noqa: ANN001, ANN202
        return v

    k, f = lap.assemble(basis), one.assemble(basis)
    w = solve(*condense(k, f * flow.dpds / MU, D=basis.get_dofs()))
    assert float(f @ w) == pytest.approx(q, rel=1e-4)
    assert flow.max_streamwise == pytest.approx(float(w.max()), rel=1e-3)
