"""Station specs -> arc length and frame, against closed-form geometry; and their errors."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.integrate import quad

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.stations import station_arc_length, station_arc_lengths, station_frame

ARC = """name = "a"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "arc"
radius = 1000
angle = 180
inlet_length = 500
outlet_length = 300
"""

SPIRAL = """name = "s"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "spiral"
inner_radius = 1500
pitch = 500
turns = 3
inlet_length = 400
[flow]
rate = "1mL/min"
density = 1000
viscosity = 0.001
"""

SERPENTINE = """name = "z"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "serpentine"
radius = 300
straight = 2000
periods = 1
"""


def test_fraction_length_and_angle_on_an_arc():
    d = loads_design(ARC)
    L = 500e-6 + 1000e-6 * math.pi + 300e-6  # leads plus R * angle (exact arc length)
    assert station_arc_length(d, 0.5) == pytest.approx(0.5 * L, rel=1e-14)
    assert station_arc_length(d, "1.25mm") == pytest.approx(1.25e-3, rel=1e-14)
    # angles count from the start of the bend, after the inlet lead: s = L_in + R theta
    assert station_arc_length(d, "90deg") == pytest.approx(500e-6 + 1000e-6 * math.pi / 2, rel=1e-14)
    assert station_arc_length(d, "0.25") == pytest.approx(0.25 * L, rel=1e-14)


def test_arc_frame_is_radial_and_outward():
    d = loads_design(ARC)
    f = station_frame(d, "60deg")
    # the arc starts at (R, 0) about the origin: at 60 deg the point is R (cos 60, sin 60)
    assert f.point[:2] == pytest.approx(1e-3 * np.array([0.5, math.sqrt(3) / 2]), abs=1e-15)
    radial = f.point / np.linalg.norm(f.point)
    assert f.outward == pytest.approx(radial, abs=1e-14)
    assert f.normal == pytest.approx(np.cross(f.tangent, [0, 0, 1]), abs=1e-15)
    assert f.curvature_radius == pytest.approx(1e-3, rel=1e-12)
    assert f.u_minus_side.startswith("inner wall")


def test_spiral_turn_station_against_quadrature():
    d = loads_design(SPIRAL)
    c = 500e-6 / (2 * math.pi)
    # arc length of r = r0 + c theta: integral of sqrt(r^2 + c^2) d theta (calculus; scipy quad)
    ref, _ = quad(lambda th: math.hypot(1500e-6 + c * th, c), 0.0, 2 * math.pi * 2.25, epsabs=1e-16, epsrel=1e-13)
    assert station_arc_length(d, "turn=2.25") == pytest.approx(400e-6 + ref, rel=1e-10)
    assert station_arc_length(d, "810deg") == pytest.approx(400e-6 + ref, rel=1e-10)
    f = station_frame(d, "turn=2.25")
    # at theta = 4.5 pi the point is r (cos, sin) = (0, r) with r = r0 + c theta
    r = 1500e-6 + c * 4.5 * math.pi
    assert f.point[:2] == pytest.approx([0.0, r], abs=1e-12)
    # curvature of an Archimedean spiral: (r^2 + 2c^2) / (r^2 + c^2)^1.5 (standard plane-curve formula)
    assert 1 / f.curvature_radius == pytest.approx((r * r + 2 * c * c) / (r * r + c * c) ** 1.5, rel=1e-10)
    assert float(f.outward @ f.point) > 0  # away from the spiral's centre


def test_serpentine_right_u_turn_outward_is_minus_n():
    d = loads_design(SERPENTINE)
    line = centerline_of(d)
    i = [k for k, kind in enumerate(line.kinds) if kind == "bend"][1]  # second U-turn turns right
    s_mid = 0.5 * (line.breaks[i] + line.breaks[i + 1])
    f = station_frame(d, f"{float(s_mid) * 1e3!r}mm")
    assert f.curvature < 0
    assert f.outward == pytest.approx(-f.normal, abs=1e-15)
    centre = np.array(line.segments[i].center + (0.0,))
    away = (f.point - centre) / np.linalg.norm(f.point - centre)
    assert f.outward == pytest.approx(away, abs=1e-12)
    assert f.u_minus_side.startswith("outer wall")


@pytest.mark.parametrize(
    "design, raw, words",
    [
        (ARC, 1.5, "[0, 1]"),
        (ARC, -0.1, "[0, 1]"),
        (ARC, "200deg", "past the end of the arc"),
        (ARC, "99mm", "off the centreline"),
        (ARC, "turn=1", "spirals only"),
        (SPIRAL, "turn=3.5", "past the end of the spiral"),
        (SERPENTINE, "bend=3:90deg", "bends 1 to 2"),
        (SERPENTINE, "bend=1:200deg", "past the end of bend 1"),
        (ARC, "half", "is not a station"),
        (ARC, True, "fraction"),
    ],
)
def test_bad_stations_name_the_key(design, raw, words):
    with pytest.raises(DesignError) as err:
        station_arc_length(loads_design(design), raw, key="--at")
    assert str(err.value).startswith("--at") and words in str(err.value)


def test_mesh_sections_key_and_duplicates():
    d = loads_design(ARC + '[mesh]\nsections = [0.5, "2mm", 0.5]\n')
    with pytest.raises(DesignError, match=r"mesh.sections\[2\].*same place as mesh.sections\[0\]"):
        station_arc_lengths(d)
    d = loads_design(ARC + '[mesh]\nsections = [0.5, 7.0]\n')
    with pytest.raises(DesignError, match=r"^mesh.sections\[1\] = 7.0"):
        station_arc_lengths(d)


def test_stations_command_dean_numbers(tmp_path, capsys):
    path = tmp_path / "s.toml"
    path.write_text(SPIRAL)
    out = tmp_path / "st.json"
    assert main(["stations", str(path), "--at", "turn=1", "--at", "0.0", "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "Dean" in text and "inner wall" in text
    data = json.loads(out.read_text())
    st = data["stations"][0]
    # De = Re sqrt(D_h / (2 R)), Re = rho U D_h / mu with the design's own density and viscosity
    area, d_h = 200e-6 * 50e-6, 2 * 200e-6 * 50e-6 / 250e-6
    re = 1000 * (1e-6 / 60 / area) * d_h / 1e-3
    assert st["dean"] == pytest.approx(re * math.sqrt(d_h / (2 * st["curvature_radius_m"])), rel=1e-9)
    assert data["stations"][1]["dean"] is None  # on the straight inlet lead
    assert main(["stations", str(path), "--at", "turn=9"]) == 2
    assert "--at" in capsys.readouterr().err
