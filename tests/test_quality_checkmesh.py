"""The manifest's volume and non-orthogonality against OpenFOAM's checkMesh (Debian's OpenFOAM
v1912), which measures the same mesh independently. Skipped where OpenFOAM is not installed.

An invented channel: a spiral of trapezoid section (its sloped top makes the faces across the
section non-orthogonal), small enough for a few seconds.
"""

from __future__ import annotations

import re

import pytest
from _hex_designs import PATHS

from chanmesh.build import build
from chanmesh.design import loads_design
from tests._openfoam import needs_openfoam, run_tool

pytestmark = needs_openfoam

DESIGN = (
    'name = "checkmesh-spiral"\nunit = "um"\n[section]\nshape = "trapezoid"\nwidth = 200\nheight_inner = 50\n'
    f'height_outer = 80\n[path]\n{PATHS["spiral"]}\n[mesh]\ncells = "hex"\ncells_across = 8\n'
    '[flow]\nrate = "50uL/min"\n'
)


def test_volume_and_non_orthogonality_agree_with_checkmesh(tmp_path):
    """Total volume to 1e-6: checkMesh cuts a cell into pyramids on its face centres, chanmesh
    into six tetrahedra, equal for plane faces and close for these slightly warped ones
    (measured: 1.3e-8). The largest non-orthogonality within 2 % + 0.01 degrees: checkMesh joins
    the cells' volume centroids, chanmesh their node means (measured: equal to its 10 printed
    digits here). Tolerances: common practice, no source."""
    manifest = build(loads_design(DESIGN), tmp_path / "out", formats=("openfoam",)).manifest
    check = run_tool(["checkMesh"], tmp_path / "out" / "openfoam")
    volume = float(re.search(r"Total volume = ([0-9.eE+-]+?)\.?\s", check).group(1))
    angle = float(re.search(r"Mesh non-orthogonality Max: ([0-9.eE+-]+)", check).group(1))
    fluid = next(g for g in manifest["groups"] if g["name"] == "fluid")["measured"]
    assert fluid == pytest.approx(volume, rel=1e-6, abs=0)
    ours = manifest["quality"]["non_orthogonality_max"]
    assert angle > 1.0  # the sloped top tilts the faces: a real angle to compare
    assert ours == pytest.approx(angle, rel=0.02, abs=0.01)
