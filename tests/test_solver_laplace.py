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
def test_conductance_of_the_small_designs(tmp_path, kind):
    """Unit potential drop from inlet to outlet on the written XDMF, conductance against outside
    values: the annular sector h ln(r_o / r_i) / theta (separable Laplace solution) for the arc;
    for the serpentine the pieces in series, straights S / (w h) and U-turns pi / (h ln(r_o / r_i)),
    which bounds the exact conductance from above (Dirichlet's principle: the pieced potential
    is constant on every junction section, so admissible) while P2 elements approach it from
    above. Measured: 2.9e-4 (arc) and 1.1e-4 (serpentine) from these values; 2e-3 allowed.
    (Inflow equals outflow on any mesh, the reactions of a Laplace matrix summing to zero, so
    that identity is not the check.)"""
    build(small_design(kind, mesh={"cells": "tet"}), tmp_path, formats=("xdmf",))
    q_in, q_out = solve_potential(load_xdmf_into_skfem(tmp_path, "t"))
    w, h = 200e-6, 50e-6
    if kind == "arc":
        exact = h * math.log(1100e-6 / 900e-6) / (math.pi / 2)
    else:
        R, S = 250e-6, 600e-6
        exact = 1 / (3 * S / (w * h) + 2 * math.pi / (h * math.log((R + w / 2) / (R - w / 2))))
    assert q_in == pytest.approx(exact, rel=2e-3, abs=0)


def test_arc_conductance_is_the_annular_sector_value(tmp_path):
    d = small_design("arc", section={"width": 400, "height": 100}, path={"radius": 600, "angle": 120}, mesh={"cells": "tet"})
    build(d, tmp_path, formats=("xdmf",))
    q_in, _ = solve_potential(load_xdmf_into_skfem(tmp_path, "t"))
    # exact conductance of an annular sector between its end faces (separable Laplace solution)
    h, ro, ri, theta = 100e-6, 800e-6, 400e-6, math.radians(120)
    exact = h * math.log(ro / ri) / theta
    assert q_in == pytest.approx(exact, rel=5e-3, abs=0)
