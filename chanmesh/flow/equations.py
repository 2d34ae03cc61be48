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

from dataclasses import dataclass, field

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
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    @classmethod
    def of(cls, vbasis: Basis, pbasis: Basis) -> "Tables":
        phi = np.array([np.asarray(b[0]) for b in vbasis.basis])
        dphi = np.array([b[0].grad for b in vbasis.basis])
        psi = np.array([np.asarray(b[0]) for b in pbasis.basis])
        x = np.asarray(vbasis.global_coordinates())[0]
        return cls(phi, dphi, psi, vbasis.dx, x, vbasis.element_dofs, pbasis.element_dofs, vbasis.N, pbasis.N)

    def product(self, name: str) -> np.ndarray:
        """Products of two shape functions (or derivatives) times the quadrature weight, (e, q, a, b),
        made once per grid: "mass" phi_i phi_j, "stiff" grad phi_i . grad phi_j, "adv_u" / "adv_z"
        phi_i dphi_j/du / dphi_j/dz, "div_u" / "div_z" dphi_i/du psi_k / dphi_i/dz psi_k, "pres" phi_i psi_k.
        A cell's integral of a field f times one of them is then one small matrix product (``_integrals``)."""
        got = self._cache.get(name)
        if got is None:
            phi, dphi, psi = self.phi, self.dphi, self.psi
            terms = {"mass": ("ieq,jeq,eq->eqij", phi, phi), "stiff": ("iceq,jceq,eq->eqij", dphi, dphi),
                     "adv_u": ("ieq,jeq,eq->eqij", phi, dphi[:, 0]), "adv_z": ("ieq,jeq,eq->eqij", phi, dphi[:, 1]),
                     "div_u": ("ieq,keq,eq->eqik", dphi[:, 0], psi), "div_z": ("ieq,keq,eq->eqik", dphi[:, 1], psi),
                     "pres": ("ieq,keq,eq->eqik", phi, psi)}
            spec, a, b = terms[name]
            got = self._cache[name] = np.einsum(spec, a, b, self.dx)
        return got

    def at(self, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """A velocity-type field (dofs) at the quadrature points: value (e, q), gradient (2, e, q)."""
        c = values[self.vdofs]  # (i, e)
        return np.einsum("ie,ieq->eq", c, self.phi), np.einsum("ie,iceq->ceq", c, self.dphi)

    def pressure_at(self, values: np.ndarray) -> np.ndarray:
        return np.einsum("ke,keq->eq", values[self.pdofs], self.psi)


def _integrals(t: Tables, name: str, *fields: np.ndarray | float) -> list[np.ndarray]:
    """(e, a, b) int f phi_a phi_b (the pair named as in ``Tables.product``) for each field f
    ((e, q) values at the quadrature points, or a constant): one batched product for them all."""
    prod = t.product(name)
    e, q, na, nb = prod.shape
    f = np.stack([np.broadcast_to(v, (e, q)) for v in fields], axis=1)  # (e, n, q)
    out = f @ prod.reshape(e, q, na * nb)
    return [out[:, k].reshape(e, na, nb) for k in range(len(fields))]


def _block_keys(curved: bool) -> list[tuple[int, int]]:
    """The Jacobian's blocks in assembly order, (row, column) with 0, 1, 2 = u_n, w, u_z and 3 = p."""
    return ([(0, 0), (0, 2), (1, 0), (1, 1), (1, 2), (2, 0), (2, 2)] + ([(0, 1)] if curved else [])
            + [(0, 3), (3, 0), (2, 3), (3, 2)])


def jacobian_pattern(t: Tables, curved: bool) -> tuple[np.ndarray, np.ndarray]:
    """Row and column of every entry ``jacobian_values`` returns, in the same order (made once
    per grid; ``curved``: kappa != 0, which adds the (u_n, w) block)."""
    key = ("pattern", curved)
    if key not in t._cache:
        rows, cols = [], []
        for a, b in _block_keys(curved):
            rdofs = t.pdofs if a == 3 else t.vdofs
            cdofs = t.pdofs if b == 3 else t.vdofs
            e, ni, nj = rdofs.shape[1], rdofs.shape[0], cdofs.shape[0]
            rows.append(np.broadcast_to((rdofs.T + a * t.nv)[:, :, None], (e, ni, nj)).ravel())
            cols.append(np.broadcast_to((cdofs.T + b * t.nv)[:, None, :], (e, ni, nj)).ravel())
        t._cache[key] = (np.concatenate(rows), np.concatenate(cols))
    return t._cache[key]


def jacobian_values(t: Tables, kappa: float, state: np.ndarray) -> np.ndarray:
    """The Newton Jacobian's entries about ``state`` (Re = 1: viscous velocity scale), one per
    entry of ``jacobian_pattern(t, kappa != 0)`` (repeated positions add up)."""
    nv = t.nv
    ur, gr = t.at(state[:nv])
    ut, gt = t.at(state[nv:2 * nv])
    uz, gz = t.at(state[2 * nv:3 * nv])
    rw = 1.0 + kappa * t.x
    curved = bool(kappa)
    (stiff,) = _integrals(t, "stiff", rw)
    (adv_u,) = _integrals(t, "adv_u", ur * rw)  # test i, (a.grad) phi_j
    (adv_z,) = _integrals(t, "adv_z", uz * rw)
    diag = stiff + (adv_u + adv_z)
    fields = [rw * gr[0], rw * gr[1], rw * gt[0] + kappa * ut, rw * gt[1], rw * gz[0], rw * gz[1]]
    if curved:
        fields += [kappa * kappa / rw, kappa * ur, -2.0 * kappa * ut]
    m = _integrals(t, "mass", *fields)
    curv = m[6] if curved else 0.0
    blocks = [diag + curv + m[0], m[1], m[2], diag + curv + (m[7] if curved else 0.0), m[3], m[4], diag + m[5]]
    if curved:
        blocks.append(m[8])
    # pressure: -int p (r/R)(div_axi v) and its transpose, the continuity rows
    (bx,) = _integrals(t, "div_u", rw)
    bx = -bx - _integrals(t, "pres", kappa)[0] if curved else -bx
    (bz,) = _integrals(t, "div_z", rw)
    bz = -bz
    blocks += [bx, bx.transpose(0, 2, 1), bz, bz.transpose(0, 2, 1)]
    return np.concatenate([np.ravel(b) for b in blocks])


def jacobian(t: Tables, kappa: float, state: np.ndarray) -> csr_matrix:
    """Newton Jacobian of the r-weighted equations (Re = 1: viscous velocity scale) about
    ``state`` = [u_n, w, u_z (nv each), p (np)]; rows/columns in the same order."""
    n = 3 * t.nv + t.np_
    return coo_matrix((jacobian_values(t, kappa, state), jacobian_pattern(t, bool(kappa))), shape=(n, n)).tocsr()


def streamwise_at_rest(t: Tables, kappa: float) -> csr_matrix:
    """The streamwise block (w, w) of the Jacobian at rest, (nv, nv): int (r/R) grad w . grad phi
    + kappa^2 (R/r) w phi. There every other block in w's rows and columns vanishes, so the first
    Newton step from rest (the Stokes flow, pure streamwise) is one solve of this block instead
    of one of the whole Jacobian."""
    rw = 1.0 + kappa * t.x
    (local,) = _integrals(t, "stiff", rw)
    if kappa:
        local = local + _integrals(t, "mass", kappa * kappa / rw)[0]
    e, ni, nj = local.shape
    rows = np.broadcast_to(t.vdofs.T[:, :, None], (e, ni, nj)).ravel()
    cols = np.broadcast_to(t.vdofs.T[:, None, :], (e, ni, nj)).ravel()
    return coo_matrix((local.ravel(), (rows, cols)), shape=(t.nv, t.nv)).tocsr()


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

