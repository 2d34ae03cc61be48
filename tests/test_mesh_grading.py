"""Grading measured on the mesh itself, from node coordinates, not from what the mesher reports.

The design asks for a symmetric geometric progression toward every wall: neighbouring cells
grow by ``wall_ratio`` away from the wall (a geometric progression by definition), or start at
``first_cell``. On a hexahedral arc the node layers are the same at every station, so the
distinct radii of all nodes are the node positions across the width, and the distinct heights
are the node positions over the height; consecutive differences are the cell sizes.
"""

from __future__ import annotations

import json

import meshio
import numpy as np
import pytest
import pyvista as pv

from chanmesh.design import loads_design
from chanmesh.meshing.registry import MESHERS


def _arc(mesh_lines: str, name: str = "grading") -> str:
    return (f'name = "{name}"\nunit = "um"\n[section]\nwidth = 200\nheight = 100\n'
            f'[path]\nkind = "arc"\nradius = 1000\nangle = 30\n[mesh]\ncells = "hex"\n{mesh_lines}\n')


def _layers(values: np.ndarray) -> np.ndarray:
    """Distinct node positions in increasing order: values closer than 1 nm (far below any cell,
    far above round-off) are one layer."""
    v = np.sort(values)
    return v[np.concatenate([[True], np.diff(v) > 1e-9])]


def _sizes(points: np.ndarray, radius: float = 1e-3) -> tuple[np.ndarray, np.ndarray]:
    across = np.diff(_layers(np.hypot(points[:, 0], points[:, 1]) - radius))
    high = np.diff(_layers(points[:, 2]))
    return across, high


@pytest.mark.parametrize("ratio", [1.3, 1.15])
def test_hex_cells_grow_by_the_wall_ratio_across_and_over_the_height(ratio):
    """Wall layers, then a uniform core (docs/resolution.md): cells_across = 10 and
    cells_high = 8 ask for core cells of 200/10 = 20 um and 100/8 = 12.5 um; the default wall
    cell is half the smaller core cell, 6.25 um (it is larger than min(w, h)/32 = 3.1 um). From
    each wall the cells form a geometric progression (by definition: one common step g) that
    starts at the wall cell, with g = wall_ratio when a uniform core follows and g <= wall_ratio
    when the two ramps meet first; no neighbour ever grows by more than wall_ratio."""
    design = loads_design(_arc(f"cells_across = 10\ncells_high = 8\nwall_ratio = {ratio}"))
    across, high = _sizes(MESHERS["hex"].mesh(design).points)
    assert across.sum() == pytest.approx(200e-6, rel=1e-9, abs=0) and high.sum() == pytest.approx(100e-6, rel=1e-9, abs=0)
    for sizes, core in ((across, 20e-6), (high, 12.5e-6)):
        n = len(sizes)
        assert n >= 6
        assert sizes == pytest.approx(sizes[::-1], rel=1e-6, abs=0)  # the same law at both walls
        assert [sizes[0], sizes[-1]] == pytest.approx([6.25e-6, 6.25e-6], rel=1e-6, abs=0)
        steps = sizes[1:] / sizes[:-1]
        g = steps[0]
        assert g <= ratio * (1 + 1e-9) and steps[1] == pytest.approx(g, rel=1e-6, abs=0)
        assert np.all(steps <= ratio * (1 + 1e-6)) and np.all(1 / steps <= ratio * (1 + 1e-6))
        assert sizes.max() / sizes.min() > g**2  # graded, not uniform
        # the core: the largest cells are equal and in the middle, within a rounding of the core cell
        largest = np.flatnonzero(sizes >= sizes.max() * (1 - 1e-6))
        assert largest.min() <= n // 2 <= largest.max() + 1
        assert sizes.max() <= 1.5 * core
    if ratio == 1.3:
        # across at 1.3, by hand: 5 ramp cells (6.25 x 1.3^4 = 17.9 um, the next would pass
        # 20 um) sum to 56.5 um a side and leave 87 um for the core: the steps are the ratio
        assert across[1] / across[0] == pytest.approx(ratio, rel=1e-6, abs=0)


def test_hex_wall_cells_are_the_requested_first_cell():
    design = loads_design(_arc("cells_across = 10\ncells_high = 8\nfirst_cell = 2"))
    across, high = _sizes(MESHERS["hex"].mesh(design).points)
    # the request itself is the reference: 2 um at all four walls
    for sizes in (across, high):
        assert [sizes[0], sizes[-1]] == pytest.approx([2e-6, 2e-6], rel=1e-6, abs=0)
        assert sizes.max() > 4 * sizes[0]


def test_hex_family_refines_what_the_files_hold(tmp_path):
    """A family at ratio 2: every level's file, read back by meshio, must hold 2^3 times the
    cells of the next coarser one, with h = (V / N)^(1/3) (Celik et al. 2008, eq. 1) measured
    from the cells by VTK (pyvista) halving and matching family.json, and twice the node
    layers across and over the height."""
    from chanmesh.family import FAMILY_FILE, build_family

    design = loads_design(_arc("cells_across = 4\ncells_high = 2\ncells_along = 6\nwall_ratio = 1.2", "fam"))
    out = tmp_path / "fam"
    build_family(design, out, levels=3, ratio=2.0, formats=("msh",))
    rows = json.loads((out / FAMILY_FILE).read_text())["levels"]
    measured = []
    for row in rows:
        m = meshio.read(out / row["path"] / "fam.msh")
        hexes = m.cells_dict["hexahedron"]
        grid = pv.UnstructuredGrid({pv.CellType.HEXAHEDRON: hexes}, m.points)
        volume = grid.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"].sum()
        across, high = _sizes(m.points * 1e-3 if m.points[:, 0].max() > 0.1 else m.points)
        measured.append((len(hexes), (volume / len(hexes)) ** (1 / 3), len(across), len(high)))
        assert row["cells"] == len(hexes)
        # family.json divides the exact volume, the cells hold the chorded one: 5 degree chords
        # keep sin(d)/d of it, so h differs by (1 - sin(d)/d) / 3 = 4.2e-4 at most
        assert row["h"] == pytest.approx(measured[-1][1], rel=5e-4, abs=0)
    for (nf, hf, af, zf), (nc, hc, ac, zc) in zip(measured, measured[1:]):
        # every size is halved and the growth ratio square-rooted, so each direction doubles
        # its cells within rounding: each wall ramp is a whole count (a ceiling) and the core a
        # rounded one, so one cell per ramp and one in the core may come or go
        assert abs(af - 2 * ac) <= 3 and abs(zf - 2 * zc) <= 3
        assert 6.0 <= nf / nc <= 9.0
        # h = (V / N)^(1/3): the refinement ratio measured from the cells follows the counts
        # (the finer level's chords cut off less volume: chord error < 1e-3 here)
        assert hc / hf == pytest.approx((nf / nc) ** (1 / 3), rel=1e-3, abs=0)
        assert 1.8 <= hc / hf <= 2.1
