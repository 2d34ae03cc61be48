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
    # (what enters leaves: q_in = -q_out holds on any mesh, as the reactions of a Laplace
    # matrix sum to zero, so it is not asserted; the conductance below can fail)
    w, h, r = design.section.width, design.section.height, design.path.radius
    exact = h * math.log((r + w / 2) / (r - w / 2)) / math.radians(design.path.angle)
    assert q_in == pytest.approx(exact, rel=2e-3)


def test_split_outlet_conductance_and_shares(tmp_path):
    """A serpentine with its outlet split 0.3 / 0.7 across the width. Conductance: the pieces in
    series, straights S / (w h) and U-turns pi / (h ln(r_o / r_i)) (the annular-sector value
    above), an upper bound of the exact conductance by Dirichlet's principle (the pieced
    potential is admissible: constant on every junction section); measured 2.4e-3 below it on
    this mesh (junctions, and the chorded bends' lost 1e-3 of volume), 6e-3 allowed. Shares: the
    last straight is 3 widths long, so the current arrives uniform across the width (the bend's
    disturbance decays as exp(-pi x / w), separable solution) and each outlet takes its width
    fraction of it: 0.3 here, measured 0.313 from nodal reactions, whose shared column of nodes
    is split half and half though its cells differ in width (0.02 allowed; swapped or wrongly
    placed outlets give 0.5 or 0.7)."""
    from _laplace import outlet_shares

    design = hex_design("serpentine", outlets="split = [0.3, 0.7]")
    mesh = mesh_hex(design)
    fem = _read_back(mesh, tmp_path / "serp.msh")
    q_in, _ = solve_potential(fem, ["outlet_1", "outlet_2"])
    w, h, R, S, P, lead = 200e-6, 60e-6, 250e-6, 600e-6, 2, 150e-6
    resistance = ((2 * P + 1) * S + lead) / (w * h) + 2 * P * math.pi / (h * math.log((R + w / 2) / (R - w / 2)))
    assert q_in <= 1 / resistance * (1 + 1e-9)
    assert q_in == pytest.approx(1 / resistance, rel=6e-3, abs=0)
    shares = outlet_shares(fem, ["outlet_1", "outlet_2"])
    assert shares["outlet_1"] + shares["outlet_2"] == pytest.approx(1.0, rel=1e-9)
    assert shares["outlet_1"] == pytest.approx(0.3, abs=0.02)
