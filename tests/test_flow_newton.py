"""The section flow's Newton pieces that skip work (flow/newton.py, flow/discrete.py): each checked
against the plain computation it replaces, done by scipy, and the Jacobian against the derivative
of the residual it linearises."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.sparse.linalg import spsolve

from chanmesh.flow import default_grid
from chanmesh.flow import equations as eq
from chanmesh.flow.discrete import discretise
from chanmesh.flow.newton import _stokes_direction
from chanmesh.geometry.section import SectionShape

SHAPE = SectionShape(200e-6, 50e-6, 50e-6)


@pytest.fixture(scope="module", params=["reference", "grid"])
def disc(request):  # noqa: ANN001, ANN201
    return discretise(default_grid(SHAPE, 8, 4), request.param, SHAPE.hydraulic_diameter)


@pytest.mark.parametrize("kappa", [0.0, 0.1, -0.3])
def test_restricted_jacobian_equals_scipys_restriction_of_the_whole(disc, kappa):
    """Entries summed straight into the restricted matrix (the scatter plan) give the matrix
    scipy makes from the whole Jacobian's COO triplets by row and column indexing: same
    structure, same values to round-off."""
    x = np.random.default_rng(3).normal(size=disc.size)
    whole = eq.jacobian(disc.tables, kappa, x)[disc.free][:, disc.free].tocsc()
    ours = disc.jacobian(kappa, x)
    whole.sort_indices()
    assert np.array_equal(ours.indptr, whole.indptr) and np.array_equal(ours.indices, whole.indices)
    assert np.max(np.abs(ours.data - whole.data)) <= 1e-13 * np.max(np.abs(whole.data))


def test_jacobian_is_the_derivative_of_the_residual(disc):
    """J v against the central difference (F(x + h v) - F(x - h v)) / 2h; the residual is
    quadratic in x, so the difference is exact up to round-off (elementary calculus)."""
    rng = np.random.default_rng(5)
    x, v = rng.normal(size=disc.size), rng.normal(size=disc.size)
    kappa, g, h = 0.2, 1.5, 1e-3
    fd = (eq.residual(disc.tables, kappa, x + h * v, g) - eq.residual(disc.tables, kappa, x - h * v, g)) / (2 * h)
    jv = eq.jacobian(disc.tables, kappa, x) @ v
    assert np.max(np.abs(jv - fd)) <= 1e-9 * np.max(np.abs(jv))


@pytest.mark.parametrize("kappa", [0.0, 0.1])
def test_first_step_from_rest_is_the_whole_jacobian_solve(disc, kappa):
    """At rest the streamwise block alone gives J^-1 m: scipy's direct solve with the whole
    restricted Jacobian (velocities, pressure) gives the same vector, zero off the w block."""
    load = eq.streamwise_load(disc.tables)
    whole = spsolve(disc.jacobian(kappa, np.zeros(disc.size)), disc.restrict(load))
    ours = _stokes_direction(disc, kappa, load)
    assert np.allclose(ours, whole, rtol=0, atol=1e-10 * np.max(np.abs(whole)))
