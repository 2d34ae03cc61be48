"""``chanmesh dean``: files, their content read back with general readers, one-line errors."""

from __future__ import annotations

import json

import numpy as np
import pytest

from chanmesh.cli import main


def test_dean_writes_json_csv_vtu_png(write_design, tmp_path, capsys):
    import pyvista as pv

    design = write_design("arc", flow={"velocity": "0.3m/s"})
    out = tmp_path / "d"
    assert main(["dean", str(design), "--at", "0.5", "--out", str(out), "--cells-across", "12", "--cells-high", "6"]) == 0
    text = capsys.readouterr().out
    assert "secondary flow: max" in text and "Ookawara et al. 2004" in text
    data = json.loads((out / "dean.json").read_text())
    f = data["flow"]
    assert f["flow_rate_m3_s"] == pytest.approx(0.3 * 200e-6 * 50e-6, rel=1e-12)
    assert f["vortex_cells"] == 2 and f["dean"] > 0 and f["dpds_ratio"] == pytest.approx(1.0, abs=0.01)
    assert data["walls"]["u_minus_half_width"] == "inner wall"
    assert data["correlation_comparison"]["correlation"].startswith("U_Dean = 1.8e-4 De^1.63")
    rows = np.loadtxt(out / "dean.csv", delimiter=",", skiprows=1)
    assert rows.shape[1] == 7
    mesh = pv.read(out / "dean.vtu")  # VTK's own reader (pyvista)
    assert mesh.n_points == len(rows)
    # the section sits at the station: every point at the bend radius +- w/2 from the arc's centre
    r = np.hypot(mesh.points[:, 0], mesh.points[:, 1])
    assert r.min() == pytest.approx(1000e-6 - 100e-6, abs=1e-12) and r.max() == pytest.approx(1100e-6, abs=1e-12)
    # area integral of the streamwise velocity over the triangles = the flow rate (VTK's cell sizes)
    sized = mesh.compute_cell_sizes(length=False, volume=False)
    w_cell = mesh.point_data_to_cell_data()["streamwise"]
    assert float(np.sum(sized["Area"] * w_cell)) == pytest.approx(f["flow_rate_m3_s"], rel=2e-2)
    assert (out / "dean.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_dean_range_and_errors(write_design, tmp_path, capsys):
    design = write_design("arc")
    out = tmp_path / "r"
    assert main(["dean", str(design), "--at", "45deg", "--flow", "0.05mL/min:0.2mL/min:3", "--out", str(out),
                 "--cells-across", "8", "--cells-high", "4"]) == 0
    data = json.loads((out / "dean_range.json").read_text())
    speeds = [f["secondary_max_m_s"] for f in data["flows"]]
    assert len(speeds) == 3 and speeds == sorted(speeds)
    assert (out / "dean_range.csv").read_text().count("\n") == 4
    capsys.readouterr()
    for argv, word in ((["--at", "0.5"], "flow.rate"), (["--at", "0.5", "--flow", "1:2"], "--flow"),
                       (["--at", "7", "--flow", "1mL/min"], "--at"),
                       (["--at", "0.5", "--flow", "1mL/min", "--cells-high", "0"], "--cells-high")):
        assert main(["dean", str(design), *argv, "--out", str(tmp_path / "bad")]) == 2
        err = capsys.readouterr().err.strip().splitlines()
        assert len(err) == 1 and word in err[0]
    assert not (tmp_path / "bad" / "dean.json").exists()


def test_numbers_reports_computed_secondary_speed_beside_the_correlation(write_design, capsys):
    """The computed speed and the Ookawara et al. (2004) correlation are both printed, each named."""
    design = write_design("arc", flow={"velocity": "0.3m/s"})
    assert main(["numbers", str(design)]) == 0
    text = capsys.readouterr().out
    assert "computed (fully developed section flow at bend" in text
    assert "correlation (Ookawara et al. 2004) there" in text
    assert main(["numbers", str(design), "--no-section-flow"]) == 0
    assert "computed (fully developed" not in capsys.readouterr().out


def test_dean_four_cell_branch_below_its_range_is_one_line_and_exit_2(tmp_path, capsys):
    """Four-cell flows of a curved square duct exist only above a Dean number (Winters 1987,
    J. Fluid Mech. 180: two- and four-cell ranges joined through limit points): far below it the
    command refuses in one line, exit 2, and writes nothing."""
    design = tmp_path / "square.toml"
    design.write_text('name = "sq"\nunit = "um"\n[section]\nwidth = 100\nheight = 100\n'
                      '[path]\nkind = "arc"\nradius = 1500\nangle = 180\n[flow]\nrate = "0.05mL/min"\n')
    out = tmp_path / "d"
    code = main(["dean", str(design), "--at", "90deg", "--branch", "four-cell", "--cells-across", "8",
                 "--cells-high", "8", "--out", str(out)])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert len(err) == 1 and "no four-cell state" in err[0]
    assert not out.exists() or not any(out.iterdir())
