"""Section surfaces in hex meshes built end to end: a node layer lies on each station."""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.verify import check_boundary_tagging
from chanmesh.geometry.stations import station_frame
from tests.conftest import small_design


@pytest.mark.parametrize("kind", ["spiral", "serpentine", "chambers"])
def test_hex_sections_are_exact_planes_of_the_section_area(kind):
    d = small_design(kind, mesh={"cells": "hex", "sections": [0.3, 0.6]})
    mesh = mesh_hex(d)
    check_boundary_tagging(mesh)
    names = [g.name for g in mesh.groups]
    assert names[-3:] == ["section_1", "section_2", "fluid"]
    m = group_measures(mesh)
    for k, station in enumerate((0.3, 0.6), start=1):
        frame = station_frame(d, station)
        nodes = mesh.points[np.unique(np.concatenate([b.cells.ravel() for b in mesh.facets_of(f"section_{k}")]))]
        # every node on the plane through the centreline point normal to the tangent (exact frame)
        assert np.max(np.abs((nodes - frame.point) @ frame.tangent)) < 1e-12
        # the exact outline's area (shoelace, any geometry handbook)
        x, y = frame.outline.corners[:, 0], frame.outline.corners[:, 1]
        area = 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))
        assert m[f"section_{k}"] == pytest.approx(area, rel=1e-9)
