"""Laplace checks on hexahedral meshes read back from a written file by scikit-fem.

phi = 1 on the inlet, 0 on the outlet(s), insulated walls. In an annular sector of inner and
outer radius r_i, r_o, height H and angle Theta, phi = 1 - theta / Theta is harmonic
(Laplace's equation in polar coordinates; e.g. Carslaw & Jaeger 1959, ch. 1 — the angular
solution), so the conductance is G = Q / (phi_in - phi_out) = H ln(r_o / r_i) / Theta.
"""

from __future__ import annotations

import math

import meshio
import numpy as np
import pytest
from _hex_designs import hex_design
from _hex_files import write_mesh_file
from _laplace import solve_potential

skfem = pytest.importorskip("skfem")
from skfem.io.meshio import from_meshio  # noqa: E402

from chanmesh.meshing.hex import mesh_hex  # noqa: E402


def _read_back(mesh, path):
    """Read with meshio and rebuild named cell sets from the group tags (XDMF/VTU keep tags,
    not names), then hand over to scikit-fem."""
    m = meshio.read(write_mesh_file(mesh, path))
    key = "gmsh:physical" if "gmsh:physical" in m.cell_data else "group"
    m.cell_sets = {
        g.name: [np.flatnonzero(np.asarray(t) == g.tag) for t in m.cell_data[key]] for g in mesh.groups
    }
    return from_meshio(m, ignore_orientation=True)


@pytest.mark.parametrize("suffix", [".vtu", ".msh"])
def test_annular_sector_conductance_and_flux_balance(tmp_path, suffix):
    design = hex_design("arc", mesh="cells_across = 8\ncells_high = 3\ncells_along = 24")
    mesh = mesh_hex(design)
    q_in, q_out = solve_potential(_read_back(mesh, tmp_path / f"arc{suffix}"), ["outlet"])
    # flux balance: what enters leaves (to solver round-off)
    assert q_in + q_out == pytest.approx(0.0, abs=1e-10 * abs(q_in))
    w, h, r = design.section.width, design.section.height, design.path.radius
    exact = h * math.log((r + w / 2) / (r - w / 2)) / math.radians(design.path.angle)
    assert q_in == pytest.approx(exact, rel=2e-3)


def test_split_outlet_flux_balance(tmp_path):
    design = hex_design("serpentine", outlets="split = [0.3, 0.7]")
    mesh = mesh_hex(design)
    q_in, q_out = solve_potential(_read_back(mesh, tmp_path / "serp.msh"), ["outlet_1", "outlet_2"])
    assert q_in > 0
    assert q_in + q_out == pytest.approx(0.0, abs=1e-10 * q_in)
