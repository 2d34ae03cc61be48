"""Cell-data vectors in a bend are read in their own cell's frame, not the section plane's.

A purely azimuthal field about the bend's axis has no in-plane part on any plane through the axis
(kinematics of a rotation, exact). Stored as cell data, each cell's vector belongs to its centre,
which lies off the section plane; read in the plane's frame it would show a false secondary flow
of about |U| sin(half a cell's angle) — the defect this test guards against (an OpenFOAM case on
a hex arc with 5-degree cells read 6x the true secondary speed and three false vortices).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.meshing.hex import mesh_hex
from chanmesh.writers.meshio_bridge import to_meshio
from tests.conftest import design_text


@pytest.mark.parametrize("direction", [1.0, -1.0])
def test_azimuthal_cell_field_has_no_secondary_flow(tmp_path, direction):
    text = design_text("arc", name="az", path={"angle": 60}, flow={"rate": "0.6mL/min"},
                       mesh={"cells": "hex", "cells_across": 12, "cells_high": 6, "cells_along": 12})
    (tmp_path / "az.toml").write_text(text)
    mesh = mesh_hex(loads_design(text))
    hexes = mesh.volumes[0].cells
    centre = mesh.points[hexes].mean(axis=1)
    theta = np.arctan2(centre[:, 1], centre[:, 0])
    r = np.hypot(centre[:, 0], centre[:, 1])
    speed = direction * 0.1 * (1.0 + (r - r.mean()) / r.mean())  # any azimuthal profile, either way round
    vel = speed[:, None] * np.column_stack([-np.sin(theta), np.cos(theta), np.zeros_like(theta)])
    m = to_meshio(mesh, facets=False)
    m.point_data = {}
    m.cell_data = {"U": [vel]}
    m.write(tmp_path / "azimuthal.vtu")
    out = tmp_path / "cut"
    rc = main(["cut", str(tmp_path / "azimuthal.vtu"), "--design", str(tmp_path / "az.toml"), "--at", "0.5",
               "--field", "U", "--association", "cell", "--no-developed", "--out", str(out)])
    assert rc == 0
    figures = json.loads((out / "section.json").read_text())["figures"]
    main_speed = abs(figures["streamwise_mean_m_s"])
    # exact: zero in-plane velocity; left only round-off and cells cut at the plane's edges
    assert figures["secondary_max_m_s"] < 1e-6 * main_speed
    assert figures["vortices"] == []
