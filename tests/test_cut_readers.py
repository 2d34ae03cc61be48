"""``chanmesh cut`` reads what solvers write: PVD time series, point or cell data by choice,
and every unreadable or unusable file gives one line and exit code 2 with the reader's own
output kept off the terminal (README promise; issue items on garbage and NaN input).

The known answers: a linear velocity field is reproduced exactly by linear tetrahedra (and
by the trapezoidal rule over a rectangle), so the flow rate is area x (U at the section
centroid) . t; a constant cell field gives area x U . t.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.geometry.stations import station_frame
from chanmesh.meshing.tet import mesh_tet
from chanmesh.post.cut import suggested_scale
from chanmesh.writers.meshio_bridge import to_meshio
from tests.conftest import design_text

C0 = np.array([0.3, -0.2, 0.05])
M = np.array([[10.0, -40.0, 5.0], [30.0, 20.0, -8.0], [2.0, 1.0, 50.0]])
CELL_U = np.array([0.1, 0.4, -0.3])
SWIRL = 0.3  # m/s


@pytest.fixture(scope="module")
def case(tmp_path_factory):
    folder = tmp_path_factory.mktemp("readers")
    text = design_text("arc", name="rd", mesh={"sections": [0.5]})
    (folder / "rd.toml").write_text(text)
    design = loads_design(text)
    mesh = mesh_tet(design)
    frame = station_frame(design, 0.5)
    return folder, design, mesh, frame


def _grid(mesh):  # noqa: ANN001, ANN202 - the volume cells as a pyvista grid
    import pyvista as pv

    m = to_meshio(mesh, facets=False)
    m.cell_data = {}
    return pv.from_meshio(m)


def _linear_flux(frame) -> float:  # noqa: ANN001
    return frame.outline.area * float((C0 + M @ frame.point) @ frame.tangent)


def _cut(folder: Path, result: Path, *extra: str) -> tuple[int, dict | None]:
    out = folder / ("cut-" + result.stem + "-" + "-".join(e.strip("-") for e in extra))
    code = main(["cut", str(result), "--design", str(folder / "rd.toml"), "--at", "0.5", "--out", str(out), *extra])
    data = json.loads((out / "section.json").read_text()) if code == 0 else None
    return code, data


def _one_line(capfd) -> str:  # noqa: ANN001
    """The whole of stderr, checked to be one line (file-descriptor level: VTK writes there)."""
    err = capfd.readouterr().err
    lines = [s for s in err.splitlines() if s.strip()]
    assert len(lines) == 1, err
    return lines[0]


def test_pvd_uses_the_last_step_and_time_picks_another(case, capfd):
    folder, design, mesh, frame = case
    grid = _grid(mesh)
    grid.save(folder / "step0.vtu")  # the mesh alone, as solvers write their first step
    g1 = grid.copy()
    g1.point_data["U"] = C0 + np.asarray(g1.points) @ M.T
    g1.save(folder / "step1.vtu")
    (folder / "run.pvd").write_text(
        '<?xml version="1.0"?>\n<VTKFile type="Collection" version="0.1">\n<Collection>\n'
        '<DataSet timestep="0" file="step0.vtu"/>\n<DataSet timestep="2.5" file="step1.vtu"/>\n'
        "</Collection>\n</VTKFile>\n"
    )
    code, data = _cut(folder, folder / "run.pvd")
    assert code == 0
    assert "field U (point data), time 2.5 (the last of 2)" in capfd.readouterr().out
    assert data["time"] == 2.5 and data["times"] == [0.0, 2.5]
    assert data["figures"]["flow_rate_m3_s"] == pytest.approx(_linear_flux(frame), rel=1e-9, abs=0)
    code, _ = _cut(folder, folder / "run.pvd", "--time", "0")
    assert code == 2 and "0 vector fields" in _one_line(capfd)
    code, _ = _cut(folder, folder / "run.pvd", "--time", "1")
    line = _one_line(capfd)
    assert code == 2 and "--time = 1 is not a time of" in line and "it has 0, 2.5" in line


def test_association_is_chosen_and_printed(case, capfd):
    folder, design, mesh, frame = case
    grid = _grid(mesh)
    grid.point_data["U"] = C0 + np.asarray(grid.points) @ M.T
    # cell data: a uniform swirl of 0.3 m/s about the bend's axis (the conftest arc is centred on
    # the origin); its flux through any plane through the axis is 0.3 m/s x area, exactly
    # (kinematics of a rotation), however the cell values are carried to the plane
    centres = np.asarray(grid.cell_centers().points)
    theta = np.arctan2(centres[:, 1], centres[:, 0])
    grid.cell_data["U"] = SWIRL * np.column_stack([-np.sin(theta), np.cos(theta), np.zeros_like(theta)])
    grid.save(folder / "both.vtu")
    code, data = _cut(folder, folder / "both.vtu")
    assert code == 0
    assert "field U (point data; also cell data: --association cell)" in capfd.readouterr().out
    assert data["field"] == {"name": "U", "association": "point", "also_as": "cell"}
    assert data["figures"]["flow_rate_m3_s"] == pytest.approx(_linear_flux(frame), rel=1e-9, abs=0)
    code, data = _cut(folder, folder / "both.vtu", "--association", "cell")
    assert code == 0 and "field U (cell data; also point data" in capfd.readouterr().out
    assert data["figures"]["flow_rate_m3_s"] == pytest.approx(frame.outline.area * SWIRL, rel=1e-9, abs=0)
    only_cells = _grid(mesh)
    only_cells.cell_data["U"] = np.tile(CELL_U, (only_cells.n_cells, 1))
    only_cells.save(folder / "cells.vtu")
    code, _ = _cut(folder, folder / "cells.vtu", "--association", "point", "--field", "U")
    assert code == 2 and "--association = point: 'U' is cell data" in _one_line(capfd)
    code, _ = _cut(folder, folder / "cells.vtu", "--association", "point")
    assert code == 2 and "0 vector fields in the point data of cells.vtu" in _one_line(capfd)


def test_garbage_file_is_one_line_without_reader_chatter(case, capfd):
    folder, *_ = case
    rng = np.random.default_rng(7)
    for name in ("garbage.vtu", "garbage.xdmf", "garbage.pvd", "garbage.msh"):
        (folder / name).write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
        code, _ = _cut(folder, folder / name)
        line = _one_line(capfd)
        assert code == 2 and line.startswith("chanmesh cut: error: result file") and "cannot be read" in line, line
    half = folder / "half.vtu"
    half.write_text('<?xml version="1.0"?>\n<VTKFile type="UnstructuredGrid" version="1.0">\n<UnstructuredGrid>\n<Piece Num')
    code, _ = _cut(folder, half)
    assert code == 2 and "cannot be read" in _one_line(capfd)
    empty_case = folder / "notacase"
    empty_case.mkdir()
    code, _ = _cut(folder, empty_case)
    assert code == 2 and "no OpenFOAM case" in _one_line(capfd)


def test_nan_velocity_is_refused(case, capfd):
    folder, design, mesh, frame = case
    grid = _grid(mesh)
    grid.point_data["U"] = np.full((grid.n_points, 3), np.nan)
    grid.save(folder / "nan.vtu")
    code, _ = _cut(folder, folder / "nan.vtu")
    line = _one_line(capfd)
    assert code == 2 and "no finite value" in line and "flow rate" not in line
    u = C0 + np.asarray(grid.points) @ M.T
    near = np.abs((np.asarray(grid.points) - frame.point) @ frame.tangent) < 60e-6
    u[near] = np.nan  # NaN only around the section: caught after sampling
    grid.point_data["U"] = u
    grid.save(folder / "some-nan.vtu")
    code, _ = _cut(folder, folder / "some-nan.vtu")
    line = _one_line(capfd)
    assert code == 2 and "NaN or infinite at" in line


def test_scale_advice_names_the_absolute_scale(case, capfd):
    """Issue: advice looped (0.001 -> 'use 1000' -> 'use 0.001'). The advice is now the
    scale relative to the file's own units, so following it once always fits."""
    folder, design, mesh, frame = case
    grid = _grid(mesh)
    grid.point_data["U"] = C0 + np.asarray(grid.points) @ M.T
    grid.save(folder / "metres.vtu")
    in_mm = grid.copy()
    in_mm.points = np.asarray(grid.points) * 1e3
    in_mm.save(folder / "millimetres.vtu")
    assert main(["cut", str(folder / "metres.vtu"), "--design", str(folder / "rd.toml"), "--at", "0.5",
                 "--scale", "0.001", "--out", str(folder / "s1")]) == 2
    assert "leave --scale out (result in m)" in _one_line(capfd)
    for wrong in ("1", "1e-6", "1000"):
        assert main(["cut", str(folder / "millimetres.vtu"), "--design", str(folder / "rd.toml"), "--at", "0.5",
                     "--scale", wrong, "--out", str(folder / "s2")]) == 2
        assert "--scale 0.001 (result in mm) would fit" in _one_line(capfd), wrong
    assert main(["cut", str(folder / "millimetres.vtu"), "--design", str(folder / "rd.toml"), "--at", "0.5",
                 "--scale", "0.001", "--out", str(folder / "s3")]) == 0
    assert suggested_scale(1.0, 1.0, 1e-3) is None  # fits: no advice


def _openfoam_case(folder: Path, design, velocities: dict[str, np.ndarray]) -> Path:  # noqa: ANN001
    """A case converted by OpenFOAM's own gmshToFoam from chanmesh's ASCII MSH 2.2, with U
    written per time by foamlib (a reader of OpenFOAM's file format, independent of VTK)."""
    import os
    import shutil
    import subprocess

    from foamlib import FoamFieldFile, FoamFile

    from chanmesh.build import build
    from chanmesh.writers import WriteOptions

    if shutil.which("gmshToFoam") is None:
        pytest.skip("OpenFOAM's gmshToFoam is not installed (Debian: apt-get install openfoam)")
    build(design, folder / "mesh", formats=("msh",), options=WriteOptions(msh_version="2.2"))
    case = folder / "case"
    (case / "system").mkdir(parents=True)
    head = "FoamFile { version 2.0; format ascii; class dictionary; object %s; }\n"
    (case / "system" / "controlDict").write_text(head % "controlDict" + "application simpleFoam;\nstartTime 0;\nendTime 1;\ndeltaT 1;\nwriteControl timeStep;\nwriteInterval 1;\n")
    (case / "system" / "fvSchemes").write_text(head % "fvSchemes")
    (case / "system" / "fvSolution").write_text(head % "fvSolution")
    env = {**os.environ, "WM_PROJECT_DIR": os.environ.get("WM_PROJECT_DIR", "/usr/share/openfoam")}
    r = subprocess.run(["gmshToFoam", str(folder / "mesh" / f"{design.name}.msh"), "-case", str(case)],
                       capture_output=True, text=True, env=env, timeout=300)
    assert r.returncode == 0, r.stdout[-2000:] + r.stderr[-2000:]
    patches = [name for name, _ in FoamFile(case / "constant" / "polyMesh" / "boundary")[None]]
    for time, value in velocities.items():
        (case / time).mkdir()
        with FoamFieldFile(case / time / "U") as f:
            f["FoamFile"] = {"version": 2.0, "format": "ascii", "class": "volVectorField", "object": "U"}
            f.dimensions = FoamFieldFile.DimensionSet(length=1, time=-1)
            f.internal_field = value
            f.boundary_field = {p: {"type": "calculated", "value": value} for p in patches}
    (case / "case.foam").write_text("")
    return case


def test_openfoam_case_latest_time_and_time_option(tmp_path, capfd):
    # a straight duct: a uniform cell field is then exactly uniform along the flow too (in a
    # bend, cut carries each cell's vector from its centre's frame to the plane's)
    text = design_text("straight", name="of", mesh={"cells": "tet"})
    (tmp_path / "of.toml").write_text(text)
    design = loads_design(text)
    case = _openfoam_case(tmp_path, design, {"0": np.zeros(3), "2": CELL_U})
    frame = station_frame(design, 0.5)
    exact = frame.outline.area * float(CELL_U @ frame.tangent)
    base = ["--design", str(tmp_path / "of.toml"), "--at", "0.5"]
    for target in (case, case / "case.foam"):  # the folder or its .foam file
        assert main(["cut", str(target), *base, "--out", str(tmp_path / "c1")]) == 0
        assert "field U (cell data), time 2 (the last of 2)" in capfd.readouterr().out
        data = json.loads((tmp_path / "c1" / "section.json").read_text())
        assert data["reader"] == "openfoam"
        # a uniform field over the exact rectangle: exact up to the sampling's wall inset (1e-6)
        assert data["figures"]["flow_rate_m3_s"] == pytest.approx(exact, rel=1e-5, abs=0)
    assert main(["cut", str(case), *base, "--time", "0", "--out", str(tmp_path / "c0")]) == 0
    capfd.readouterr()
    assert json.loads((tmp_path / "c0" / "section.json").read_text())["figures"]["flow_rate_m3_s"] == 0.0
    # point data on request: VTK's cell-to-point average, still the constant field
    assert main(["cut", str(case), *base, "--association", "point", "--out", str(tmp_path / "cp")]) == 0
    assert "field U (point data; also cell data" in capfd.readouterr().out
    data = json.loads((tmp_path / "cp" / "section.json").read_text())
    assert data["figures"]["flow_rate_m3_s"] == pytest.approx(exact, rel=2e-3, abs=0)
    assert main(["cut", str(case), *base, "--time", "5", "--out", str(tmp_path / "c5")]) == 2
    assert "--time = 5 is not a time of" in _one_line(capfd)


@pytest.mark.parametrize("factor, warned", [(1.05, True), (1.01, False)])
def test_flow_rate_against_the_design(case, capfd, factor, warned):
    """[flow] velocity x section area against the section's flux of the linear field (exact:
    area x U(centroid) . t); beyond 2 % a warning (common practice, no source)."""
    folder, design, mesh, frame = case
    grid = _grid(mesh)
    grid.point_data["U"] = C0 + np.asarray(grid.points) @ M.T
    grid.save(folder / "linear.vtu")
    q = _linear_flux(frame)
    velocity = factor * q / frame.outline.area
    text = design_text("arc", name="rd", mesh={"sections": [0.5]}, flow={"velocity": f"{velocity:.9g}m/s"})
    (folder / "rd-flow.toml").write_text(text)
    out = folder / f"flow-{factor}"
    assert main(["cut", str(folder / "linear.vtu"), "--design", str(folder / "rd-flow.toml"), "--at", "0.5",
                 "--out", str(out)]) == 0
    text_out = capfd.readouterr().out
    expected = 1.0 / factor - 1.0
    assert f"the section carries {100 * expected:+.2f} %" in text_out
    assert ("WARNING: more than 2 % off" in text_out) == warned
    check = json.loads((out / "section.json").read_text())["figures"]["design_flow"]
    assert check["relative_difference"] == pytest.approx(expected, abs=1e-6) and check["warning"] == warned
