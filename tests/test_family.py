"""Mesh families: level scales, family.json in the format the GCI report reads, cell-count
scaling, h from an outside volume measurement, option checks and the max_cells refusal."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
import pyvista as pv

from chanmesh.cli import main
from design_text import arc_text
from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from chanmesh.family import FAMILY_FILE, FamilyPlan, build_family, family_is_current, plan_family
from chanmesh.post.gci_table import read_family



def arc(cells: str = "tet", across: int = 6, extra: str = ""):
    return loads_design(arc_text("fam-arc", 45, across, cells, extra))


def test_plan_scales_coarsest_is_the_design():
    plan = plan_family(3, 1.5)
    assert plan.scales == pytest.approx((2.25, 1.5, 1.0))
    assert FamilyPlan.folder(1) == "level-1"


@pytest.mark.parametrize("levels, ratio, key", [(1, 2.0, "--levels"), (7, 2.0, "--levels"), (3, 1.05, "--ratio"), (3, 4.5, "--ratio")])
def test_options_out_of_range_name_the_option(levels, ratio, key):
    with pytest.raises(DesignError) as err:
        plan_family(levels, ratio)
    assert err.value.key == key


def test_finest_level_estimate_checked_before_meshing(tmp_path):
    design = arc(extra="max_cells = 3000")  # level-3 (the design) fits, level-1 does not
    with pytest.raises(DesignError, match="finest level") as err:
        build_family(design, tmp_path / "f", levels=3, ratio=2.0)
    assert err.value.key == "mesh.max_cells"
    assert not (tmp_path / "f" / "level-3").exists()  # refused before anything was meshed


def test_tet_family_writes_levels_and_family_json(tmp_path):
    out = tmp_path / "study"
    r = 1.5
    result = build_family(arc(), out, levels=3, ratio=r, formats=("msh", "vtu"))
    data = json.loads((out / FAMILY_FILE).read_text())
    rows = data["levels"]
    assert [row["level"] for row in rows] == [1, 2, 3] and [row["path"] for row in rows] == ["level-1", "level-2", "level-3"]
    for row in rows:
        folder = out / row["path"]
        assert (folder / "manifest.json").is_file() and (folder / "fam-arc.msh").is_file()
        # h = (V/N)^(1/3) (Celik et al. 2008, eq. 1), V measured outside chanmesh by pyvista (VTK)
        grid = pv.read(folder / "fam-arc.vtu")
        vols = grid.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"]
        cells3d = np.asarray(grid.celltypes) == pv.CellType.TETRA
        assert cells3d.sum() == row["cells"]
        assert row["h"] == pytest.approx((vols[cells3d].sum() / row["cells"]) ** (1 / 3), rel=1e-3)
    # cell counts grow by about r^3 per level; a tetrahedral count is statistical, so the
    # achieved ratio is checked within 15 % (common practice, no source)
    for fine, coarse in zip(rows, rows[1:]):
        assert fine["ratio_to_next"] == pytest.approx(coarse["h"] / fine["h"])
        assert fine["ratio_to_next_requested"] == r
        assert fine["ratio_to_next"] == pytest.approx(r, rel=0.15)
    assert rows[-1]["ratio_to_next"] is None
    # quality figures travel with each level, without the report's histograms
    assert all("scaled_jacobian_min" in row["quality"] and "histograms" not in row["quality"] for row in rows)
    # the GCI report reads it as is
    sizes = read_family(out)
    assert sizes[1] == (rows[0]["h"], float(rows[0]["cells"]))
    assert family_is_current(out, arc(), plan_family(3, r), ("msh", "vtu"))
    assert result.built == (1, 2, 3)
    # a rerun reuses every complete level
    again = build_family(arc(), out, levels=3, ratio=r, formats=("msh", "vtu"))
    assert again.built == () and again.record["levels"] == rows


def test_identical_levels_and_small_ratio_are_warned(tmp_path):
    # uniform hex cells, 2 across, 2 high, 4 along, times 1.1 round back to the same: both levels are one mesh
    result = build_family(arc("hex", 2, "cells_high = 2\ncells_along = 4\nwall_ratio = 1"), tmp_path / "f", levels=2, ratio=1.1,
                          formats=("msh",))
    text = " ".join(result.record["warnings"])
    assert "below 1.3" in text and "identical" in text


def test_cli_family_prints_levels(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text(arc_text("fam-arc", 45, 3))
    assert main(["family", str(design), "--levels", "2", "--ratio", "2", "--out", str(tmp_path / "o"), "--format", "msh"]) == 0
    assert "level-1" in capsys.readouterr().out
    assert main(["family", str(design), "--levels", "9", "--out", str(tmp_path / "o")]) == 2
    assert "--levels = 9" in capsys.readouterr().err


def test_hex_family_scales_cell_counts_by_ratio_cubed(tmp_path):
    r = 2.0
    design = arc("hex", 4, "cells_high = 2\ncells_along = 10\nwall_ratio = 1")
    rows = build_family(design, tmp_path / "hexfam", levels=3, ratio=r, formats=("msh",)).record["levels"]
    for fine, coarse in zip(rows, rows[1:]):
        # uniform cells: each of the three counts (across, high, along) doubles exactly: N scales by r^3
        assert fine["cells"] == coarse["cells"] * round(r) ** 3
        # h = (V/N)^(1/3) (Celik et al. 2008, eq. 1) then halves exactly
        assert fine["ratio_to_next"] == pytest.approx(r, rel=1e-12)
