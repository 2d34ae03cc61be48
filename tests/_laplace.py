"""Laplace's equation on a mesh read back by scikit-fem (a general finite-element library).

Potential 1 on ``inlet``, 0 on the outlets, insulated walls. The fluxes through the fixed
faces are the discrete reactions K phi at their nodes, so inflow and outflow balance to solver
round-off on any mesh; for an annular sector the inflow is the conductance
h ln(R_outer / R_inner) / theta (separable solution phi = 1 - angle / theta).
"""

from __future__ import annotations

import numpy as np
import skfem
from skfem.helpers import dot, grad


@skfem.BilinearForm
def _laplace(u, v, w):  # noqa: ANN001, ANN202
    return dot(grad(u), grad(v))


def solve_potential(mesh, outlets=("outlet",)) -> tuple[float, float]:  # noqa: ANN001
    """(inflow, outflow) of the unit potential drop; P2 on tetrahedra, Q1 on hexahedra."""
    element = skfem.ElementTetP2() if isinstance(mesh, skfem.MeshTet) else skfem.ElementHex1()
    basis = skfem.Basis(mesh, element)
    K = _laplace.assemble(basis)
    inlet = basis.get_dofs("inlet").all()
    outlet = np.unique(np.concatenate([basis.get_dofs(n).all() for n in outlets]))  # shared edges once
    x = np.zeros(basis.N)
    x[inlet] = 1.0
    x = skfem.solve(*skfem.condense(K, np.zeros(basis.N), x=x, D=np.concatenate([inlet, outlet])))
    reaction = K @ x
    return float(reaction[inlet].sum()), float(reaction[outlet].sum())


def outlet_shares(mesh, outlets) -> dict[str, float]:  # noqa: ANN001
    """Share of the inflow leaving through each outlet (same solve as ``solve_potential``); a
    node on the line between two outlets gives half its reaction to each."""
    element = skfem.ElementTetP2() if isinstance(mesh, skfem.MeshTet) else skfem.ElementHex1()
    basis = skfem.Basis(mesh, element)
    K = _laplace.assemble(basis)
    inlet = basis.get_dofs("inlet").all()
    groups = {n: basis.get_dofs(n).all() for n in outlets}
    outlet = np.unique(np.concatenate(list(groups.values())))
    x = np.zeros(basis.N)
    x[inlet] = 1.0
    x = skfem.solve(*skfem.condense(K, np.zeros(basis.N), x=x, D=np.concatenate([inlet, outlet])))
    reaction = K @ x
    owners = np.zeros(basis.N)
    for dofs in groups.values():
        owners[dofs] += 1
    q_in = reaction[inlet].sum()
    return {n: float(-(reaction[d] / owners[d]).sum() / q_in) for n, d in groups.items()}
