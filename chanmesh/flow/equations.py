"""Weak forms of fully developed flow in a duct bent about a fixed axis (and of the straight duct).

Flow that does not change along a circular centreline of radius R is exactly the steady
axisymmetric Navier-Stokes problem with swirl about the bend's axis: unknowns the radial and
vertical (secondary) velocities u_n, u_z, the swirl (streamwise) velocity w, and the pressure
p(r, z) - G R theta, whose constant theta-gradient (G = -dp/ds at r = R) drives the flow.
With r = R + u (u across the section, along n):

    rho (a.grad u_n - w^2 / r)   = -dp/dr + mu (lap u_n - u_n / r^2)
    rho (a.grad w + u_n w / r)   =  G R / r + mu (lap w - w / r^2)
    rho (a.grad u_z)             = -dp/dz + mu lap u_z
    (1 / r) d(r u_n)/dr + du_z/dz = 0,           a = (u_n, u_z), lap f = (1/r)(r f_r)_r + f_zz

no small-curvature approximation. Weighting by r / R = 1 + kappa u (kappa = 1/R, signed:
negative for a bend turning right, whose centre lies on the u > 0 side) makes the forcing the
constant G and gives forms valid for kappa = 0, the straight duct. Everything here is
dimensionless: lengths by L, velocities by U, pressure and G L by mu U / L, Re = rho U L / mu.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.sparse import coo_matrix, csr_matrix
from skfem import Basis, BilinearForm, Functional, LinearForm
from skfem.helpers import dot, grad


@dataclass
class Tables:
    """Basis values at the quadrature points of every cell, for vectorised assembly.

    ``phi`` (i, e, q) velocity shape functions, ``dphi`` (i, 2, e, q) their gradients, ``psi``
    (k, e, q) pressure shape functions, ``dx`` (e, q) quadrature weights times |J|, ``x`` (e, q)
    the dimensionless u coordinate, dof maps ``vdofs`` (i, e) and ``pdofs`` (k, e).
    """

    phi: np.ndarray
    dphi: np.ndarray
    psi: np.ndarray
    dx: np.ndarray
    x: np.ndarray
    vdofs: np.ndarray
    pdofs: np.ndarray
    nv: int
    np_: int

    @classmethod
    def of(cls, vbasis: Basis, pbasis: Basis) -> "Tables":
        phi = np.array([np.asarray(b[0]) for b in vbasis.basis])
        dphi = np.array([b[0].grad for b in vbasis.basis])
        psi = np.array([np.asarray(b[0]) for b in pbasis.basis])
        x = np.asarray(vbasis.global_coordinates())[0]
        return cls(phi, dphi, psi, vbasis.dx, x, vbasis.element_dofs, pbasis.element_dofs, vbasis.N, pbasis.N)

    def at(self, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """A velocity-type field (dofs) at the quadrature points: value (e, q), gradient (2, e, q)."""
        c = values[self.vdofs]  # (i, e)
        return np.einsum("ie,ieq->eq", c, self.phi), np.einsum("ie,iceq->ceq", c, self.dphi)

    def pressure_at(self, values: np.ndarray) -> np.ndarray:
        return np.einsum("ke,keq->eq", values[self.pdofs], self.psi)


def _mass(t: Tables, coef: np.ndarray) -> np.ndarray:
    """(e, i, j) int coef phi_i phi_j."""
    return np.einsum("ieq,jeq,eq->eij", t.phi, t.phi, coef * t.dx)


def _scatter(rows: list, cols: list, vals: list, local: np.ndarray, rdofs: np.ndarray, cdofs: np.ndarray,
             roff: int, coff: int) -> None:
    e, ni, nj = local.shape
    rows.append(np.broadcast_to((rdofs.T + roff)[:, :, None], (e, ni, nj)).ravel())
    cols.append(np.broadcast_to((cdofs.T + coff)[:, None, :], (e, ni, nj)).ravel())
    vals.append(local.ravel())


def _viscous(t: Tables, kappa: float) -> tuple[np.ndarray, np.ndarray | float]:
    """(e, i, j) int (r/R) grad phi_i . grad phi_j, and int kappa^2 (R/r) phi_i phi_j (0.0 when straight)."""
    rw = 1.0 + kappa * t.x
    stiff = np.einsum("iceq,jceq,eq->eij", t.dphi, t.dphi, t.dx * rw)
    return stiff, (_mass(t, kappa * kappa / rw) if kappa else 0.0)


def streamwise_at_rest(t: Tables, kappa: float) -> csr_matrix:
    """The streamwise block (w, w) of the Jacobian at rest, (nv, nv): there every other block in
    w's rows and columns vanishes, so the first Newton step from rest (the Stokes flow, pure
    streamwise) is one solve of this block instead of one of the whole Jacobian."""
    stiff, curv = _viscous(t, kappa)
    rows: list = []
    cols: list = []
    vals: list = []
    _scatter(rows, cols, vals, np.asarray(stiff + curv), t.vdofs, t.vdofs, 0, 0)
    return coo_matrix((vals[0], (rows[0], cols[0])), shape=(t.nv, t.nv)).tocsr()


def jacobian(t: Tables, kappa: float, state: np.ndarray) -> csr_matrix:
    """Newton Jacobian of the r-weighted equations (Re = 1: viscous velocity scale) about
    ``state`` = [u_n, w, u_z (nv each), p (np)]; rows/columns in the same order."""
    nv = t.nv
    ur, gr = t.at(state[:nv])
    ut, gt = t.at(state[nv:2 * nv])
    uz, gz = t.at(state[2 * nv:3 * nv])
    rw = 1.0 + kappa * t.x
    dxw = t.dx * rw
    stiff, curv = _viscous(t, kappa)
    adv = np.einsum("ieq,jceq,ceq->eij", t.phi, t.dphi, np.array([ur, uz]) * dxw)  # test i, (a.grad) phi_j
    diag = stiff + adv
    blocks = {
        (0, 0): diag + curv + _mass(t, rw * gr[0]),
        (0, 2): _mass(t, rw * gr[1]),
        (1, 0): _mass(t, rw * gt[0] + kappa * ut),
        (1, 1): diag + curv + (_mass(t, kappa * ur) if kappa else 0.0),
        (1, 2): _mass(t, rw * gt[1]),
        (2, 0): _mass(t, rw * gz[0]),
        (2, 2): diag + _mass(t, rw * gz[1]),
    }
    if kappa:
        blocks[(0, 1)] = _mass(t, -2.0 * kappa * ut)
    rows: list = []
    cols: list = []
    vals: list = []
    for (a, b), local in blocks.items():
        _scatter(rows, cols, vals, np.asarray(local), t.vdofs, t.vdofs, a * nv, b * nv)
    # pressure: -int p (r/R)(div_axi v) and its transpose, the continuity rows
    bx = -np.einsum("ieq,keq,eq->eik", t.dphi[:, 0], t.psi, dxw)
    if kappa:
        bx = bx - np.einsum("ieq,keq,eq->eik", t.phi, t.psi, kappa * t.dx)
    bz = -np.einsum("ieq,keq,eq->eik", t.dphi[:, 1], t.psi, dxw)
    po = 3 * nv
    for a, local in ((0, bx), (2, bz)):
        _scatter(rows, cols, vals, local, t.vdofs, t.pdofs, a * nv, po)
        _scatter(rows, cols, vals, local.transpose(0, 2, 1), t.pdofs, t.vdofs, po, a * nv)
    n = po + t.np_
    return coo_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n)).tocsr()


def residual(t: Tables, kappa: float, state: np.ndarray, g: float) -> np.ndarray:
    """Residual of the r-weighted equations at ``state`` with driving gradient ``g`` (Re = 1)."""
    nv = t.nv
    ur, gr = t.at(state[:nv])
    ut, gt = t.at(state[nv:2 * nv])
    uz, gz = t.at(state[2 * nv:3 * nv])
    p = t.pressure_at(state[3 * nv:])
    rw = 1.0 + kappa * t.x
    dxw = t.dx * rw
    k2 = kappa * kappa / rw

    def part(grad_u: np.ndarray, source: np.ndarray) -> np.ndarray:
        """int (r/R) grad u . grad phi_i + source phi_i, summed into dofs."""
        local = np.einsum("iceq,ceq->ie", t.dphi, grad_u * dxw) + np.einsum("ieq,eq->ie", t.phi, source * t.dx)
        return np.bincount(t.vdofs.ravel(), local.ravel(), minlength=nv)

    div_r = -(np.einsum("ieq,eq->ie", t.dphi[:, 0], p * dxw) + np.einsum("ieq,eq->ie", t.phi, kappa * p * t.dx))
    div_z = -np.einsum("ieq,eq->ie", t.dphi[:, 1], p * dxw)
    f_r = part(gr, k2 * ur + rw * (ur * gr[0] + uz * gr[1]) - kappa * ut * ut)
    f_r += np.bincount(t.vdofs.ravel(), div_r.ravel(), minlength=nv)
    f_t = part(gt, k2 * ut + rw * (ur * gt[0] + uz * gt[1]) + kappa * ur * ut - g)
    f_z = part(gz, rw * (ur * gz[0] + uz * gz[1]))
    f_z += np.bincount(t.vdofs.ravel(), div_z.ravel(), minlength=nv)
    cont = -np.einsum("keq,eq->ke", t.psi, (rw * (gr[0] + gz[1]) + kappa * ur) * t.dx)
    f_p = np.bincount(t.pdofs.ravel(), cont.ravel(), minlength=t.np_)
    return np.concatenate([f_r, f_t, f_z, f_p])


def streamwise_load(t: Tables) -> np.ndarray:
    """int phi_i dA on the streamwise block: flow rate = this . state; d(residual)/dG = -this."""
    out = np.zeros(3 * t.nv + t.np_)
    local = np.einsum("ieq,eq->ie", t.phi, t.dx)
    out[t.nv:2 * t.nv] = np.bincount(t.vdofs.ravel(), local.ravel(), minlength=t.nv)
    return out


@BilinearForm
def poisson(u, v, w):  # noqa: ANN001, ANN201
    return dot(grad(u), grad(v))


@LinearForm
def unit_load(v, w):  # noqa: ANN001, ANN201
    return v


def stream_forms(kappa: float) -> tuple[BilinearForm, LinearForm]:
    """Stream function psi of the in-plane flow: (r/R) u_n = dpsi/dz, (r/R) u_z = -dpsi/du,
    from  int (R/r) grad psi . grad phi = int (u_n dphi/dz - u_z dphi/du),  psi = 0 on the walls."""

    @BilinearForm
    def lhs(u, v, w):  # noqa: ANN001, ANN202
        return dot(grad(u), grad(v)) / (1.0 + kappa * w.x[0])

    @LinearForm
    def rhs(v, w):  # noqa: ANN001, ANN202
        return w["un"] * v.grad[1] - w["uz"] * v.grad[0]

    return lhs, rhs


@Functional
def in_plane_speed(w):  # noqa: ANN001, ANN201
    return (w["un"] ** 2 + w["uz"] ** 2) ** 0.5

