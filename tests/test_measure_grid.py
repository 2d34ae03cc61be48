"""Group volumes of a swept hexahedral mesh read off its grid (``meshing.measure``).

References: the general path of ``meshing.measure`` (cells gathered; itself checked against
closed-form volumes in ``test_hand_references.py``), to the bit, and Pappus's centroid theorem
(Goodman & Goodman 1969) for the volume of a rectangle swept along an arc in straight cells.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from _hex_designs import TRAPEZOID, hex_design

from chanmesh.meshing import grid_slabs
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.sweep_grid import proven_grid

CASES = {
    "spiral, trapezoid": dict(path="spiral", section=TRAPEZOID, mesh="first_cell = 3"),
    "chambers (absent columns)": dict(path="chambers"),
    "arc, one cell high": dict(path="arc", mesh="cells_high = 1\ncells_across = 3"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_grid_volumes_equal_the_general_path_to_the_bit(case, monkeypatch):
    mesh = mesh_hex(hex_design(**CASES[case]))
    mesh.points = mesh.points + np.random.default_rng(11).normal(scale=3e-6, size=mesh.points.shape)
    assert proven_grid(mesh) is not None
    expect = group_measures(dataclasses.replace(mesh, sweep=None))
    assert group_measures(mesh) == expect
    monkeypatch.setattr(grid_slabs, "SLAB_CELLS", 100)  # many slabs, none matching the chunks
    monkeypatch.setattr("chanmesh.meshing.measure.CHUNK", 777)
    assert group_measures(mesh)["fluid"] == group_measures(dataclasses.replace(mesh, sweep=None))["fluid"]


def test_grid_volume_of_an_arc_is_pappus():
    """A 200 x 60 um rectangle swept 90 degrees about an axis 400 um from its centre, in n
    straight cells along: each cell is the wedge between two planes through the axis, whose
    volume is the section's area times its centroid's chord, A R sin(90deg / n) (Pappus,
    Goodman & Goodman 1969); the channel's is n times that."""
    mesh = mesh_hex(hex_design("arc"))
    assert proven_grid(mesh) is not None
    n = mesh.sweep.shape[0]
    exact = 200e-6 * 60e-6 * 400e-6 * n * math.sin(math.pi / 2 / n)
    assert group_measures(mesh)["fluid"] == pytest.approx(exact, rel=1e-12, abs=0)
