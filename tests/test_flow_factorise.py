"""The section flow's sparse LU (``flow.newton.factorise``) against scipy's direct solver."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve

from chanmesh.flow.newton import factorise


def _saddle(n: int) -> sp.csc_matrix:
    """A Stokes-like saddle point [[A, B^T], [B, 0]]: its pressure rows have no diagonal."""
    rng = np.random.default_rng(1)
    a = sp.diags([-1.0, 4.0, -1.0], [-1, 0, 1], (n, n)) + sp.random(n, n, 0.01, random_state=rng) * 0.1
    b = sp.random(n // 3, n, 0.05, random_state=rng) + sp.eye(n // 3, n)
    return sp.bmat([[a, b.T], [b, None]]).tocsc()


def test_both_orderings_solve_what_scipy_solves():
    mat = _saddle(300)
    rhs = np.linspace(1.0, 2.0, mat.shape[0])
    expect = spsolve(mat, rhs)  # scipy's own sparse direct solve: the reference
    for symmetric in (False, True):
        lu, y = factorise(mat, rhs, symmetric=symmetric)
        assert np.allclose(y, expect, rtol=1e-9, atol=1e-12)
        assert np.allclose(lu.solve(2.0 * rhs), 2.0 * expect, rtol=1e-9, atol=1e-12)


def test_a_symmetric_mode_factor_that_fails_its_check_is_replaced(monkeypatch):
    """With a check no factor can pass, the matrix is factored again in the column ordering,
    and that factor is the one returned."""
    import scipy.sparse.linalg as sla

    import chanmesh.flow.newton as newton

    orderings = []
    real = sla.splu

    def spy(mat, **kw):
        orderings.append(kw.get("permc_spec", "COLAMD"))
        return real(mat, **kw)

    monkeypatch.setattr(newton, "SYMMETRIC_CHECK", -1.0)
    monkeypatch.setattr(sla, "splu", spy)
    mat = _saddle(150)
    rhs = np.ones(mat.shape[0])
    lu, y = factorise(mat, rhs, symmetric=True)
    assert orderings == ["MMD_AT_PLUS_A", "COLAMD"]
    assert np.allclose(mat @ y, rhs, rtol=0, atol=1e-9)
    assert np.allclose(mat @ lu.solve(rhs), rhs, rtol=0, atol=1e-9)
