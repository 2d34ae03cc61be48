"""``chanmesh cut``: a synthetic field with a known answer, VTK's own slice, several paths, bad input."""

from __future__ import annotations

import json
import math
from pathlib import Path

import meshio
import numpy as np
import pytest
import pyvista as pv

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.errors import DesignError, MeshFileError
from chanmesh.meshing.tet import mesh_tet
from chanmesh.post.cut import cut, probe
from chanmesh.post.result_file import read_result
from chanmesh.geometry.stations import station_frame
from chanmesh.writers.meshio_bridge import to_meshio
from synthetic_flow import arc_field, duct_flow_rate, duct_profile, secondary

W, H, R = 120e-6, 60e-6, 600e-6
U_MEAN = 0.5  # m/s
AMP = -0.02 * W * H / H  # stream-function amplitude, m^2/s: Dean-like sense (outward at mid-height)

ARC = f"""name = "cut-arc"
unit = "um"
[section]
width = {W * 1e6:g}
height = {H * 1e6:g}
[path]
kind = "arc"
radius = {R * 1e6:g}
angle = 20
[mesh]
cells_across = 10
sections = [0.5]
"""


def write_result(mesh, folder: Path, fields: dict[str, np.ndarray], suffix: str = ".vtu", scale: float = 1.0) -> Path:
    m = to_meshio(mesh)
    m.points = m.points * scale
    m.point_data = dict(fields)
    m.cell_data = {}
    path = folder / f"result{suffix}"
    m.write(path)
    return path


@pytest.fixture(scope="module")
def arc_case(tmp_path_factory):
    folder = tmp_path_factory.mktemp("arc")
    design_path = folder / "arc.toml"
    design_path.write_text(ARC)
    design = loads_design(ARC)
    mesh = mesh_tet(design)  # the section at 0.5 is embedded: nodes lie exactly on the cut plane
    g_over_mu = U_MEAN * W * H / duct_flow_rate(W, H, 1.0)
    vel = arc_field(mesh.points, R, W, H, g_over_mu, AMP)
    result = write_result(mesh, folder, {"U": vel, "p": np.zeros(len(mesh.points))})
    return design, design_path, mesh, result, g_over_mu


def test_synthetic_duct_flow_and_vortices(arc_case):
    """Exact field (see ``synthetic_flow``): the rectangular-duct series profile along the local
    tangent plus two counter-rotating cells from psi = A sin(pi xi^1.5) sin(2 pi zeta)."""
    design, _, _, result, g_over_mu = arc_case
    frame = station_frame(design, 0.5)
    c = cut(read_result(result, "U"), design, frame, nu=96)
    g, f = c.grid, c.figures
    exact_w = duct_profile(g.uu, g.vv, W, H, g_over_mu)
    # The tolerances are the interpolation error of linear tetrahedra on 10 cells across (about
    # 5 cells over the height; error ~ h^2 |w''| / 8): measured 4.5 % of the peak at worst,
    # 1.7 % RMS, flow rate 2.8 % low (a concave profile is underestimated by P1 interpolation).
    err = c.streamwise - exact_w
    assert np.max(np.abs(err)) < 0.06 * exact_w.max()
    assert np.sqrt(np.mean(err**2)) < 0.025 * exact_w.max()
    # flow rate against the series value Q = (4 b a^3 G / 3 mu)[1 - 192 a / (pi^5 b) sum tanh / i^5]
    # (White 2006, eq. 3-49)
    assert f["flow_rate_m3_s"] == pytest.approx(duct_flow_rate(W, H, g_over_mu), rel=0.04)
    assert f["streamwise_mean_m_s"] == pytest.approx(U_MEAN, rel=0.04)
    assert f["flow_rate_m3_s"] < duct_flow_rate(W, H, g_over_mu)  # P1 of a concave profile: from below
    an, bz = secondary(g.uu, g.vv, W, H, AMP)
    smax = float(np.hypot(an, bz).max())
    assert np.max(np.hypot(c.sec_n - an, c.sec_z - bz)) < 0.2 * smax  # measured 15 %
    assert f["secondary_max_m_s"] == pytest.approx(smax, rel=0.05)  # measured 2.3 %
    # vortex centres: extrema of psi at xi = 0.5^(2/3), zeta = 1/4 and 3/4 (synthetic_flow docstring)
    vort = f["vortices"]
    assert len(vort) == 2
    u_c = (0.5 ** (2 / 3) - 0.5) * W
    for v in vort:
        assert v["u_m"] == pytest.approx(u_c, abs=0.025 * W)  # measured 1.3 % of W
        assert abs(v["z_m"]) == pytest.approx(0.25 * H, abs=0.01 * H)  # measured 0.2 % of H
        # A < 0: lower cell clockwise, upper counter-clockwise looking downstream
        assert v["sense"] == ("counter-clockwise" if v["z_m"] > 0 else "clockwise")
    # centring: both zero to round-off
    assert f["centring"]["grid_centroid_to_centreline_point_m"] < 1e-15
    assert f["centring"]["plane_normal_to_tangent_rad"] < 1e-12


def test_samples_match_vtk_slice(arc_case):
    """pyvista ``slice`` (vtkCutter) with the same origin and normal, at the slice's own points."""
    design, _, _, result, _ = arc_case
    frame = station_frame(design, 0.5)
    res = read_result(result, "U")
    sl = res.grid.slice(normal=frame.tangent, origin=frame.point)
    pts = np.asarray(sl.points)
    near = np.linalg.norm(pts - frame.point, axis=1) < W  # this crossing of the channel only
    # a tight tolerance: with 1e-3 W, a point on the bottom wall was placed in a thin neighbouring
    # tetrahedron 0.1 um away and extrapolated there (2e-4 of the peak off)
    values, valid = probe(res, pts[near], tolerance=1e-6 * W)
    assert valid.all()
    ref = np.asarray(sl.point_data["U"])[near]
    assert np.max(np.abs(values - ref)) < 1e-9 * np.abs(ref).max()


def test_cli_writes_four_files_and_xdmf_agrees(arc_case, tmp_path, capsys):
    design, design_path, mesh, result, _ = arc_case
    out = tmp_path / "cut"
    assert main(["cut", str(result), "--design", str(design_path), "--at", "0.5", "--field", "U", "--out", str(out)]) == 0
    assert "vortex 1" in capsys.readouterr().out
    assert sorted(p.name for p in out.iterdir()) == ["section.csv", "section.json", "section.png", "section.vtu"]
    data = json.loads((out / "section.json").read_text())
    rows = (out / "section.csv").read_text().splitlines()
    assert len(rows) == 1 + data["sampling"]["points"]
    grid = pv.read(out / "section.vtu")
    assert set(grid.point_data.keys()) >= {"streamwise", "secondary", "velocity"}
    # the secondary vector is in the plane: no component along the tangent
    assert np.max(np.abs(np.asarray(grid.point_data["secondary"]) @ station_frame(design, 0.5).tangent)) < 1e-12
    import matplotlib.image as mpimg

    img = mpimg.imread(out / "section.png")[..., :3]
    assert img.shape[0] > 300 and img.std() > 0.1  # a picture, not a blank canvas
    # the same result through XDMF (meshio reader) gives the same figures
    xdmf = write_result(mesh, tmp_path, {"U": np.asarray(pv.read(result).point_data["U"])}, suffix=".xdmf")
    c = cut(read_result(xdmf), design, station_frame(design, 0.5), nu=100)
    assert c.figures["flow_rate_m3_s"] == pytest.approx(data["figures"]["flow_rate_m3_s"], rel=1e-9)


@pytest.mark.parametrize(
    "path, section, stations",
    [
        ('kind = "spiral"\ninner_radius = 800\npitch = 300\nturns = 1', "width = 200\nheight = 50", [0.2, "turn=0.5", 0.9]),
        ('kind = "arc"\nradius = 600\nangle = 60', 'shape = "trapezoid"\nwidth = 200\nheight_inner = 40\nheight_outer = 70', [0.5]),
        ('kind = "serpentine"\nradius = 300\nstraight = 600\nperiods = 1', "width = 200\nheight = 50", [0.29, 0.7]),
    ],
)
def test_linear_field_is_recovered_exactly(tmp_path, path, section, stations):
    """A linear field U = c + M x is interpolated exactly by linear tetrahedra, so the cut must
    return its projections to round-off; the flow rate is area * (U at the section centroid) . t
    (centroid of the trapezoid by the handbook formula, ``SectionShape.centroid``)."""
    design = loads_design(f'name = "lin"\nunit = "um"\n[section]\n{section}\n[path]\n{path}\n'
                          f"[mesh]\ncells_across = 4\nsections = {json.dumps(stations)}\n")
    mesh = mesh_tet(design)
    c0, M = np.array([0.3, -0.2, 0.05]), np.array([[10.0, -40.0, 5.0], [30.0, 20.0, -8.0], [2.0, 1.0, 50.0]])
    result = write_result(mesh, tmp_path, {"U": c0 + mesh.points @ M.T})
    res = read_result(result)
    for raw in stations:
        frame = station_frame(design, raw)
        c = cut(res, design, frame, nu=60)
        exact = c0 + c.grid.points @ M.T
        assert np.max(np.abs(c.velocity.reshape(-1, 3) - exact)) < 1e-6 * np.abs(exact).max()
        assert c.streamwise.ravel() == pytest.approx(exact @ frame.tangent, abs=1e-6)
        uc, vc = frame.outline.centroid
        centroid = frame.point + uc * frame.normal + vc * np.array([0, 0, 1.0])
        q = frame.outline.area * float((c0 + M @ centroid) @ frame.tangent)
        # midpoint rule over the mapped grid: exact for a rectangle, O(du^2) for the trapezoid
        assert c.figures["flow_rate_m3_s"] == pytest.approx(q, rel=1e-4, abs=1e-9 * abs(q) + 1e-18)
        assert c.figures["area_m2"] == pytest.approx(frame.outline.area, rel=1e-12)
        cen = c.figures["centring"]
        assert cen["grid_centroid_to_centreline_point_m"] < 1e-15 and cen["plane_normal_to_tangent_rad"] < 1e-9


def test_bad_input(arc_case, tmp_path, capsys):
    design, design_path, mesh, result, _ = arc_case
    base = ["cut", str(result), "--design", str(design_path), "--out", str(tmp_path / "o")]
    assert main(base + ["--at", "1.5"]) == 2
    assert "--at = 1.5" in capsys.readouterr().err
    with pytest.raises(DesignError, match="past the end of the arc"):
        station_frame(design, "30deg")
    assert main(base + ["--at", "0.5", "--field", "V"]) == 2
    err = capsys.readouterr().err
    assert "'V' is not in" in err and "U (point, 3 components)" in err and "p (point, 1 component)" in err
    assert main(base + ["--at", "0.5", "--field", "p"]) == 2
    assert "needs a vector" in capsys.readouterr().err
    in_mm = write_result(mesh, tmp_path, {"U": np.asarray(pv.read(result).point_data["U"])}, scale=1e3)
    with pytest.raises(MeshFileError, match=r"unit mismatch; --scale 0.001 \(result in mm\)"):
        cut(read_result(in_mm, "U"), design, station_frame(design, 0.5))
    # with the suggested scale it fits
    c = cut(read_result(in_mm, "U", scale=1e-3), design, station_frame(design, 0.5), nu=40)
    assert c.valid_fraction == 1.0
    assert not (tmp_path / "o").exists() or not any((tmp_path / "o").iterdir())
