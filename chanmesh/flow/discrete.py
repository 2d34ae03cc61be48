"""The two discretisations of the section flow on a ``SectionGrid`` and the sparse solves.

* ``"reference"``: Taylor-Hood P2-P1 triangles (quadrilaterals split in two), the converged
  answer the other is judged against.
* ``"grid"``: MINI (P1 + cubic bubble velocity, P1 pressure), whose velocity unknowns sit on the
  grid's own nodes: a low-order stand-in for what a second-order finite-volume solver resolves
  with those nodes.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.sparse import csr_matrix
from skfem import Basis, ElementTriMini, ElementTriP1, ElementTriP2, MeshTri

from chanmesh.errors import ChanmeshError
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
    return Discrete(mesh, tables, scalar, length, kind, free, size, scalar_free, node_dofs,
                    np.asarray(out_points), np.asarray(out_triangles))


def solve_free(matrix: csr_matrix, rhs: np.ndarray, free: np.ndarray) -> np.ndarray:
    """Solve matrix x = rhs on the ``free`` dofs with the others zero (sparse direct)."""
    from scipy.sparse.linalg import spsolve

    x = np.zeros(matrix.shape[0])
    x[free] = spsolve(matrix[free][:, free].tocsc(), rhs[free])
    return x
