"""A general finite-element library (scikit-fem) reads the written XDMF and solves on it.

Laplace's equation (``tests/_laplace.py``): the inlet and outlet fluxes balance, and for an
annular sector the conductance equals the exact h ln(R_outer / R_inner) / theta.
"""

from __future__ import annotations

import json
import math

import meshio
import numpy as np
import pytest
import skfem

from _laplace import solve_potential

from chanmesh.build import build
from tests.conftest import small_design


def load_xdmf_into_skfem(folder, stem: str):  # noqa: ANN001, ANN201
    """Mesh + named boundaries from chanmesh's XDMF pair, as the README shows."""
    cells = meshio.read(folder / f"{stem}.xdmf")
    facets = meshio.read(folder / f"{stem}_facets.xdmf")
    names = json.loads((folder / f"{stem}_groups.json").read_text())
    mesh = skfem.MeshTet(cells.points.T, cells.cells_dict["tetra"].T)
    tri = facets.cells_dict["triangle"]
    tags = facets.cell_data_dict["group"]["triangle"]
    # map each tagged triangle to the mesh's facet index through sorted node triples
    key = {tuple(f): i for i, f in enumerate(np.sort(mesh.facets.T, axis=1))}
    boundaries = {
        name: np.array([key[tuple(t)] for t in np.sort(tri[tags == info["tag"]], axis=1)])
        for name, info in names.items() if info["dim"] == 2
    }
    return mesh.with_boundaries(boundaries)


@pytest.mark.parametrize("kind", ["arc", "serpentine"])
def test_fluxes_balance(tmp_path, kind):
    build(small_design(kind), tmp_path, formats=("xdmf",))
    q_in, q_out = solve_potential(load_xdmf_into_skfem(tmp_path, "t"))
    assert q_in > 0
    assert q_in == pytest.approx(-q_out, rel=1e-9)


def test_arc_conductance_is_the_annular_sector_value(tmp_path):
    d = small_design("arc", section={"width": 400, "height": 100}, path={"radius": 600, "angle": 120})
    build(d, tmp_path, formats=("xdmf",))
    q_in, _ = solve_potential(load_xdmf_into_skfem(tmp_path, "t"))
    # exact conductance of an annular sector between its end faces (separable Laplace solution)
    h, ro, ri, theta = 100e-6, 800e-6, 400e-6, math.radians(120)
    exact = h * math.log(ro / ri) / theta
    assert q_in == pytest.approx(exact, rel=5e-3)
