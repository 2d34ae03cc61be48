"""Resolution keys measured on the meshes themselves (issue 12 item 2, issue 15 item 21).

The cell sizes are read off node coordinates (a graded grid is a geometric progression by
definition: each wall-layer cell is wall_ratio times its neighbour), the tetrahedra over the
height are counted with VTK's cell locator (pyvista ``find_cells_intersecting_line``), and
a family's counts against r^3 from the cells built. Small designs, made up for the tests.
"""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.hexplan import plan_hex

W, H = 240e-6, 80e-6


def design(mesh: str = "", cells: str = "hex", width: float = 240, height: float = 80, angle: float = 30) -> object:
    return loads_design(
        f'name = "keys"\nunit = "um"\n[section]\nwidth = {width}\nheight = {height}\n'
        f'[path]\nkind = "arc"\nradius = 1200\nangle = {angle}\n[mesh]\ncells = "{cells}"\n{mesh}\n'
    )


def section_sizes(d) -> tuple[np.ndarray, np.ndarray]:  # noqa: ANN001
    """Cell widths across and heights over the height at the inlet, from the mesh's nodes."""
    mesh = mesh_hex(d)
    ni, nj = mesh.info["cells_across"], mesh.info["cells_high"]
    layer = mesh.points[: (ni + 1) * (nj + 1)].reshape(ni + 1, nj + 1, 3)
    across = np.linalg.norm(np.diff(layer[:, 0, :], axis=0), axis=1)  # bottom row
    high = np.diff(layer[ni // 2, :, 2])  # the middle column
    return across, high


def test_core_cells_are_what_the_counts_ask():
    # cells_across = 12, cells_high = 8: core cells of W/12 = 20 um and H/8 = 10 um. The wall
    # ramp ends at a cell `last` in [core / g, core] (g = wall_ratio), and the uniform core cell
    # c keeps the step from it within g both ways, c in [last / g, last g]; so c lies in
    # [core / g^2, core g], the count nearest the asked core among those allowed
    d = design("cells_across = 12\ncells_high = 8\nfirst_cell = 2")
    g = d.mesh.wall_ratio
    across, high = section_sizes(d)
    for sizes, core in ((across, W / 12), (high, H / 8)):
        middle = sizes[len(sizes) // 2]
        n_core = int(np.sum(np.isclose(sizes, middle, rtol=1e-9)))
        assert n_core >= 2 and np.isclose(sizes, middle, rtol=1e-9)[len(sizes) // 2 - n_core // 2:][:n_core].all()
        assert core / g**2 * (1 - 1e-9) <= middle <= core * g * (1 + 1e-9)
        steps = sizes[1:] / sizes[:-1]
        assert np.all(steps <= g * (1 + 1e-9)) and np.all(1 / steps <= g * (1 + 1e-9))


def test_wall_cell_stays_put_when_the_core_is_refined():
    # the complaint: cells_across shrank the wall cell geometrically. Now first_cell is the
    # wall cell on all four walls whatever the core counts
    for counts in ("cells_across = 8\ncells_high = 4", "cells_across = 16\ncells_high = 8", "cells_across = 32\ncells_high = 16"):
        across, high = section_sizes(design(counts + "\nfirst_cell = 1.5"))
        for sizes in (across, high):
            assert sizes[0] == pytest.approx(1.5e-6, rel=1e-9) and sizes[-1] == pytest.approx(1.5e-6, rel=1e-9)


def test_default_wall_cell_stays_put_from_the_default_core_on():
    # default first_cell = min(W, H) / 32 = 2.5 um from the default core (min / 16) and finer
    walls = []
    for n_high in (None, 20, 24):
        across, high = section_sizes(design("" if n_high is None else f"cells_high = {n_high}"))
        walls.append((across[0], high[0], high[-1], across[-1]))
    assert np.allclose(walls, H / 32, rtol=1e-9)


def test_top_and_bottom_wall_cells_equal_the_side_wall_cells():
    # issue 15 item 21: the automatic cells_high gave top/bottom cells twice the side walls' (8 um
    # against 4 um on a 60 um height). One law on all four walls now.
    d = design("cells_across = 10", width=200, height=60)
    across, high = section_sizes(d)
    assert high[0] == pytest.approx(across[0], rel=1e-9)
    assert high[-1] == pytest.approx(across[-1], rel=1e-9)


def test_wall_layers_grow_by_the_ratio_up_to_the_core():
    across, _ = section_sizes(design("cells_across = 10\ncells_high = 4\nfirst_cell = 3\nwall_ratio = 1.25"))
    k = int(np.argmin(np.abs(across[1:] / across[:-1] - 1.25) < 1e-9)) + 1
    assert k >= 4 and across[0] == pytest.approx(3e-6, rel=1e-9)  # 3, 3.75, 4.7, ... um toward the 20 um core
    assert np.allclose(across[1:k] / across[: k - 1], 1.25, rtol=1e-9)


def test_tetrahedra_resolve_the_height():
    """The tet size field uses the height too: a vertical probe line through the middle of the
    section crosses at least cells_high tetrahedra (VTK's cell locator through pyvista)."""
    import pyvista as pv

    from chanmesh.meshing.tet import mesh_tet
    from chanmesh.writers.meshio_bridge import to_meshio

    d = design("cells_high = 5\ncells_across = 6", cells="tet", width=120, height=40, angle=10)
    mesh = mesh_tet(d)
    grid = pv.from_meshio(to_meshio(mesh))
    grid = grid.extract_cells(np.flatnonzero(grid.celltypes == pv.CellType.TETRA))
    # the middle of the section halfway along the arc: radius 1200 um, 5 degrees turned
    a = np.radians(5.0)
    x, y = 1200e-6 * np.cos(a), 1200e-6 * np.sin(a)
    crossed = grid.find_cells_intersecting_line([x, y, -0.499 * 40e-6], [x, y, 0.499 * 40e-6])
    assert len(crossed) >= 5
    # the same probe across the width crosses at least cells_across
    r0, r1 = 1200e-6 - 0.499 * 120e-6, 1200e-6 + 0.499 * 120e-6
    crossed_w = grid.find_cells_intersecting_line([r0 * np.cos(a), r0 * np.sin(a), 0.0], [r1 * np.cos(a), r1 * np.sin(a), 0.0])
    assert len(crossed_w) >= 6


def test_family_scales_the_count_by_r_cubed(tmp_path):
    """Two levels at ratio 2 built from the design (default wall cell, graded): every count
    doubles up to rounding, so the cells scale by 8 within the rounding of the counts."""
    from chanmesh.family import build_family

    d = design("cells_across = 6\ncells_high = 4", angle=10)
    rows = build_family(d, tmp_path / "fam", levels=2, ratio=2.0, formats=("msh",)).record["levels"]
    assert rows[0]["cells"] / rows[1]["cells"] == pytest.approx(8.0, rel=0.15)
    fine, coarse = plan_hex(d, 2.0), plan_hex(d)
    for f, c in zip(fine.shape, coarse.shape):
        assert abs(f - 2 * c) <= 2


def test_refusal_names_the_key_that_drives_the_count():
    from chanmesh.build import check_estimate

    with pytest.raises(DesignError) as wall:
        check_estimate(design("cells_across = 4\ncells_high = 2\nfirst_cell = 0.05\nwall_ratio = 1.01\nmax_cells = 1000"))
    assert "wall layers drive it" in str(wall.value) and "mesh.first_cell" in str(wall.value)
    with pytest.raises(DesignError) as core:
        check_estimate(design("cells_across = 400\ncells_high = 100\nmax_cells = 1000", angle=1))
    assert "core cells drive it" in str(core.value) and "mesh.cells_across" in str(core.value)


def test_first_cell_larger_than_the_core_is_refused():
    with pytest.raises(DesignError) as info:
        design("cells_across = 12\ncells_high = 8\nfirst_cell = 15")
    assert "mesh.first_cell" in str(info.value) and "core cell" in str(info.value)
