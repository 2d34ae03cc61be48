"""The two discretisations of the section flow on a ``SectionGrid`` and the sparse solves.

* ``"reference"``: Taylor-Hood P2-P1 triangles (quadrilaterals split in two), the converged
  answer the other is judged against.
* ``"grid"``: MINI (P1 + cubic bubble velocity, P1 pressure), whose velocity unknowns sit on the
  grid's own nodes: a low-order stand-in for what a second-order finite-volume solver resolves
  with those nodes.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.sparse import coo_matrix, csc_matrix, csr_matrix
from skfem import Basis, ElementTriMini, ElementTriP1, ElementTriP2, MeshTri

from chanmesh.errors import ChanmeshError
from chanmesh.flow import equations as eq
from chanmesh.flow.equations import Tables
from chanmesh.flow.grid import SectionGrid

DISCRETISATIONS = ("reference", "grid")


@dataclass
class Discrete:
    """A grid in dimensionless coordinates with its composite basis and index sets."""

    mesh: MeshTri
    tables: Tables  # basis values for the vectorised assembly of (u_n, w, u_z, p)
    scalar: Basis  # velocity basis (each velocity component; streamwise Poisson, stream function)
    length: float  # m per dimensionless length unit
    kind: str
    free: np.ndarray  # composite dofs solved for (not walls, not the pinned pressure)
    size: int  # unknowns: 3 velocity blocks and the pressure
    scalar_free: np.ndarray
    node_dofs: np.ndarray  # scalar-basis dofs whose values are the outputs (P2: vertices + edges)
    out_points: np.ndarray  # (k, 2) dimensionless locations of node_dofs
    out_triangles: np.ndarray  # (t, 3) triangles over out_points
    wall_nodes: np.ndarray  # indices into out_points of the nodes on the walls
    reduced: csr_matrix | None = None
    """(size, k) basis of the solved-for subspace when smaller than ``free`` (``mirror_basis``)."""
    _plans: dict = field(default_factory=dict, repr=False)

    def restrict(self, v: np.ndarray) -> np.ndarray:
        """A residual-type vector on the unknowns solved for."""
        return v[self.free] if self.reduced is None else self.reduced.T @ v

    def restrict_coords(self, x: np.ndarray) -> np.ndarray:
        """Coordinates of a state ``x`` (in the subspace) on the unknowns solved for."""
        if self.reduced is None:
            return x[self.free]
        norm2 = np.asarray(self.reduced.multiply(self.reduced).sum(axis=0)).ravel()
        return (self.reduced.T @ x) / norm2

    def restrict_matrix(self, matrix: csr_matrix) -> csc_matrix:
        """The Jacobian on the unknowns solved for (Galerkin restriction B^T J B when reduced)."""
        if self.reduced is None:
            return matrix[self.free][:, self.free].tocsc()
        return (self.reduced.T @ matrix @ self.reduced).tocsc()

    def jacobian(self, kappa: float, state: np.ndarray) -> csc_matrix:
        """The Newton Jacobian (``equations.jacobian``) on the unknowns solved for. Without a
        reduced basis the entries are summed straight into the restricted matrix's slots, found
        once per grid (``_ScatterPlan``), instead of building the whole matrix and cutting it."""
        if self.reduced is not None:
            return self.restrict_matrix(eq.jacobian(self.tables, kappa, state))
        curved = bool(kappa)
        plan = self._plans.get(curved)
        if plan is None:
            plan = self._plans[curved] = _ScatterPlan.of(*eq.jacobian_pattern(self.tables, curved), self.free, self.size)
        return plan.matrix(eq.jacobian_values(self.tables, kappa, state))

    def extend(self, step: np.ndarray) -> np.ndarray:
        """A full-size state change from a step on the unknowns solved for."""
        out = np.zeros(self.size)
        if self.reduced is None:
            out[self.free] = step
        else:
            out += self.reduced @ step
        return out


@dataclass(frozen=True)
class _ScatterPlan:
    """Where each entry of a fixed (rows, cols) pattern lands in the CSC matrix restricted to the
    ``free`` rows and columns: ``slot`` per entry (``nnz`` for an entry dropped, on a fixed row or
    column), and the CSC structure (sorted rows in each column)."""

    slot: np.ndarray
    indices: np.ndarray
    indptr: np.ndarray
    n: int

    @classmethod
    def of(cls, rows: np.ndarray, cols: np.ndarray, free: np.ndarray, size: int) -> "_ScatterPlan":
        where = np.full(size, -1)
        where[free] = np.arange(len(free))
        r, c = where[rows], where[cols]
        keep = (r >= 0) & (c >= 0)
        n = len(free)
        positions, slot_kept = np.unique(c[keep] * n + r[keep], return_inverse=True)
        slot = np.full(len(rows), len(positions))
        slot[keep] = slot_kept
        indptr = np.searchsorted(positions // n, np.arange(n + 1))
        return cls(slot, positions % n, indptr, n)

    def matrix(self, values: np.ndarray) -> csc_matrix:
        """The restricted matrix of ``values`` (one per pattern entry; repeated slots add up)."""
        nnz = len(self.indices)
        data = np.bincount(self.slot, weights=values, minlength=nnz + 1)[:nnz]
        return csc_matrix((data, self.indices, self.indptr), shape=(self.n, self.n))


def discretise(grid: SectionGrid, kind: str, length: float) -> Discrete:
    if kind not in DISCRETISATIONS:
        raise ChanmeshError(f"discretisation = {kind!r}: must be one of {', '.join(DISCRETISATIONS)}")
    pts = np.asarray(grid.points, float)
    tri = grid.triangles()
    if len(pts) < 3 or len(tri) < 2 or not np.all(np.isfinite(pts)):
        raise ChanmeshError("section grid: needs finite points and at least two cells")
    # orient every triangle counter-clockwise
    a, b, c = pts[tri[:, 0]], pts[tri[:, 1]], pts[tri[:, 2]]
    cross = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0])
    if np.any(np.abs(cross) <= 1e-14 * length**2):
        raise ChanmeshError("section grid: has cells of zero area")
    tri = np.where((cross < 0)[:, None], tri[:, [0, 2, 1]], tri)
    mesh = MeshTri(pts.T / length, tri.T)
    vel = ElementTriP2() if kind == "reference" else ElementTriMini()
    intorder = 5 if kind == "reference" else 4
    scalar = Basis(mesh, vel, intorder=intorder)
    pressure = Basis(mesh, ElementTriP1(), intorder=intorder)
    tables = Tables.of(scalar, pressure)
    nv = scalar.N
    wall = np.asarray(scalar.get_dofs().all())
    size = 3 * nv + pressure.N
    fixed = np.concatenate([wall, wall + nv, wall + 2 * nv, [3 * nv]])  # walls; one pressure pinned
    free = np.setdiff1d(np.arange(size), fixed)
    scalar_free = np.setdiff1d(np.arange(nv), wall)
    if kind == "reference":
        fine = mesh.refined()
        node_dofs = np.concatenate([scalar.nodal_dofs[0], scalar.facet_dofs[0]])
        out_points, out_triangles = fine.p.T, fine.t.T
        if not np.allclose(scalar.doflocs[:, node_dofs].T, out_points, atol=1e-12):  # pragma: no cover
            raise RuntimeError("P2 dof locations do not match the refined mesh nodes")
    else:
        node_dofs = scalar.nodal_dofs[0]
        out_points, out_triangles = mesh.p.T, mesh.t.T
    wall_nodes = np.flatnonzero(np.isin(node_dofs, wall))
    return Discrete(mesh, tables, scalar, length, kind, free, size, scalar_free, node_dofs,
                    np.asarray(out_points), np.asarray(out_triangles), wall_nodes)


def mirror_basis(d: Discrete) -> csr_matrix:
    """Basis of the states mirror-symmetric about mid-height: u_n, w and p even, u_z odd.

    Column per pair of mirror dofs (e_i + e_j, or e_i - e_j for u_z; a u_z dof on the mid-plane
    is zero), walls and the pinned pressure (with its mirror) left out. On a grid that is its own
    mirror image (``grid.mirrored``) the equations map symmetric states to symmetric residuals,
    so B^T F = 0 is F = 0 there: the symmetric problem with about half the unknowns, and without
    the asymmetric modes that make the Jacobian singular at a symmetry-breaking point.
    """
    from scipy.spatial import cKDTree

    vel = np.asarray(d.scalar.doflocs).T
    pres = np.asarray(d.mesh.p).T  # P1 dof i is vertex i
    mid = 0.5 * (vel[:, 1].min() + vel[:, 1].max())
    nv = d.scalar.N
    fixed = np.ones(d.size, bool)
    fixed[d.free] = False
    rows, cols, vals = [], [], []
    k = 0
    for offset, locs, sign in ((0, vel, 1.0), (nv, vel, 1.0), (2 * nv, vel, -1.0), (3 * nv, pres, 1.0)):
        dist, mirror = cKDTree(locs).query(np.column_stack([locs[:, 0], 2.0 * mid - locs[:, 1]]))
        if np.max(dist) > 1e-9 * max(1.0, float(np.ptp(locs))):
            raise ChanmeshError("section grid: not symmetric about mid-height (use grid.mirrored)")
        for i, j in enumerate(mirror):
            if j < i or fixed[offset + i] or fixed[offset + j] or (i == j and sign < 0):
                continue
            rows.append(offset + i)
            vals.append(1.0)
            cols.append(k)
            if j != i:
                rows.append(offset + j)
                vals.append(sign)
                cols.append(k)
            k += 1
    return coo_matrix((vals, (rows, cols)), shape=(d.size, k)).tocsr()


def solve_free(matrix: csr_matrix, rhs: np.ndarray, free: np.ndarray) -> np.ndarray:
    """Solve matrix x = rhs on the ``free`` dofs with the others zero (sparse direct)."""
    from scipy.sparse.linalg import spsolve

    x = np.zeros(matrix.shape[0])
    x[free] = spsolve(matrix[free][:, free].tocsc(), rhs[free])
    return x
