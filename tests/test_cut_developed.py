"""``chanmesh cut`` beside the fully developed flow of ``chanmesh.flow`` at the same station.

A result that *is* fully developed must be recognised as such: the developed solution of the
section (exact toroidal equations, ``chanmesh.flow``; its own tests check it against Dean's
series and published Dean-flow results) is laid onto the nodes of a hexahedral arc mesh, and the
cut of that 3D field must agree with the developed figures and vortex centres to the
interpolation error of the mesh; a field without secondary flow must show the full difference.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.geometry.section import section_shape_of
from chanmesh.meshing.hex import mesh_hex
from chanmesh.numbers.fluid import fluid_of
from chanmesh.writers.meshio_bridge import to_meshio
from tests.conftest import design_text

R = 1e-3  # the conftest arc: R 1000 um, 200 x 50 um


@pytest.fixture(scope="module")
def developed_case(tmp_path_factory):
    import matplotlib.tri as mtri

    from chanmesh.flow import solve_section_flow

    folder = tmp_path_factory.mktemp("developed")
    text = design_text("arc", name="dv", path={"angle": 60}, flow={"rate": "0.6mL/min"},
                       mesh={"cells": "hex", "cells_across": 40, "cells_high": 14, "sections": [0.5]})
    (folder / "dv.toml").write_text(text)
    design = loads_design(text)
    fluid = fluid_of(design.flow)
    sf = solve_section_flow(section_shape_of(design), R, fluid.density, fluid.viscosity, design.flow.rate,
                            estimate_error=False)
    mesh = mesh_hex(design)
    x, y, z = mesh.points.T
    theta = np.arctan2(y, x)
    u = np.hypot(x, y) - R
    tri = mtri.Triangulation(sf.points[:, 0], sf.points[:, 1], sf.triangles)
    parts = [np.asarray(mtri.LinearTriInterpolator(tri, f)(u, z).filled(0.0))
             for f in (sf.streamwise, sf.secondary_u, sf.secondary_z)]
    t = np.column_stack([-np.sin(theta), np.cos(theta), np.zeros_like(x)])
    n = np.column_stack([np.cos(theta), np.sin(theta), np.zeros_like(x)])
    vel = parts[0][:, None] * t + parts[1][:, None] * n + parts[2][:, None] * np.array([0, 0, 1.0])
    m = to_meshio(mesh, facets=False)
    m.cell_data = {}
    m.point_data = {"U": vel}
    m.write(folder / "developed.vtu")
    m.point_data = {"U": parts[0][:, None] * t}
    m.write(folder / "no-secondary.vtu")
    return folder, sf


def _cut(folder: Path, name: str) -> dict:
    out = folder / f"cut-{name}"
    assert main(["cut", str(folder / f"{name}.vtu"), "--design", str(folder / "dv.toml"), "--at", "0.5",
                 "--out", str(out)]) == 0
    assert (out / "section_vs_developed.png").stat().st_size > 20_000
    return json.loads((out / "section.json").read_text())["figures"]


def test_a_developed_result_matches_the_developed_flow(developed_case, capsys):
    folder, sf = developed_case
    f = _cut(folder, "developed")
    text = capsys.readouterr().out
    assert "fully developed at this station (chanmesh.flow, same flow rate, De = " in text
    d = f["developed"]
    assert d["flow_rate_m3_s"] == pytest.approx(f["flow_rate_m3_s"], rel=1e-12, abs=0)
    # the developed field carried by trilinear hexahedra (40 x 14, graded): measured secondary
    # max +2.1 %, mean -3.7 %, vortex centres 0.5 % and 0.9 % of the width apart
    assert abs(d["cut_minus_developed"]["secondary_max_relative"]) < 0.04
    assert abs(d["cut_minus_developed"]["secondary_mean_relative"]) < 0.06
    assert d["vortex_count"] == {"cut": 2, "developed": 2}
    for pair in d["vortex_pairs"]:
        assert pair["distance_over_width"] < 0.02


def test_a_result_without_secondary_flow_shows_the_difference(developed_case, capsys):
    folder, sf = developed_case
    f = _cut(folder, "no-secondary")
    capsys.readouterr()
    d = f["developed"]
    assert d["cut_minus_developed"]["secondary_max_relative"] == pytest.approx(-1.0, abs=1e-9)
    assert all(p["cut"] is None for p in d["vortex_pairs"])


def test_no_comparison_without_flow(tmp_path, capsys):
    text = design_text("arc", name="nf", mesh={"cells": "hex"})
    (tmp_path / "nf.toml").write_text(text)
    mesh = mesh_hex(loads_design(text))
    m = to_meshio(mesh, facets=False)
    m.cell_data = {}
    x, y, _ = mesh.points.T
    m.point_data = {"U": np.column_stack([-y, x, 0 * x])}
    m.write(tmp_path / "r.vtu")
    assert main(["cut", str(tmp_path / "r.vtu"), "--design", str(tmp_path / "nf.toml"), "--at", "0.5",
                 "--out", str(tmp_path / "c")]) == 0
    assert "fully developed comparison: the design has no [flow]" in capsys.readouterr().out
    assert not (tmp_path / "c" / "section_vs_developed.png").exists()
