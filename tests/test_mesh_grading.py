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
    """Distinct node positions (rounded to 1 pm, far below any cell) in increasing order."""
    return np.unique(np.round(values, 12))


def _sizes(points: np.ndarray, radius: float = 1e-3) -> tuple[np.ndarray, np.ndarray]:
    across = np.diff(_layers(np.hypot(points[:, 0], points[:, 1]) - radius))
    high = np.diff(_layers(points[:, 2]))
    return across, high


@pytest.mark.parametrize("ratio", [1.3, 1.15])
def test_hex_cells_grow_by_the_wall_ratio_across_and_over_the_height(ratio):
    design = loads_design(_arc(f"cells_across = 10\ncells_high = 8\nwall_ratio = {ratio}"))
    across, high = _sizes(MESHERS["hex"].mesh(design).points)
    assert across.sum() == pytest.approx(200e-6, rel=1e-9, abs=0) and high.sum() == pytest.approx(100e-6, rel=1e-9, abs=0)
    for sizes in (across, high):
        n = len(sizes)
        assert n >= 6
        wall_side = sizes[1:3] / sizes[:2]  # the two ratios next to the low wall ...
        far_side = sizes[::-1][1:3] / sizes[::-1][:2]  # ... and next to the high wall
        assert wall_side == pytest.approx([ratio, ratio], rel=1e-6, abs=0)
        assert far_side == pytest.approx([ratio, ratio], rel=1e-6, abs=0)
        # the core: the largest cells are the middle ones, and no neighbour grows by more than the ratio
        assert np.argmax(sizes) in (n // 2 - 1, n // 2)
        steps = sizes[1:] / sizes[:-1]
        assert np.all(steps <= ratio * (1 + 1e-6)) and np.all(1 / steps <= ratio * (1 + 1e-6))
        assert sizes.max() / sizes.min() > ratio**2  # graded, not uniform


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
        assert nf == 8 * nc
        assert af == 2 * ac and zf == 2 * zc
        # the finer level's chords cut off less volume (chord error, < 1e-3 here)
        assert hc / hf == pytest.approx(2.0, rel=1e-3, abs=0)
