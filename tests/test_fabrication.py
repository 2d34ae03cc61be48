"""Fabrication outputs (STEP, STL, mould STL, DXF) against analytic volumes and plan areas.

References: the channel volume A (L + u_c Phi) from Pappus's centroid theorem in the general
form of Goodman & Goodman (1969), and the footprint w L of a swept width (the same offset-
curve formula), both worked by hand in ``tests/hand_reference.py`` (no chanmesh code); straight
chambers are sums of rectangles. Areas of DXF outlines by the shoelace formula (Gauss's area formula).
Files are read back with general libraries: trimesh (STL), gmsh/OpenCASCADE (STEP), ezdxf (DXF).
"""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest
import trimesh

from chanmesh.build import build
from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from chanmesh.writers import FORMATS, WriteOptions, fabrication_formats
from chanmesh.writers.dxf import OUTLINE_LAYER, PORT_LAYER, write_dxf
from chanmesh.writers.solid_formats import mould_box, write_mould_stl, write_step, write_stl
import hand_reference as hand

ARC = """
name = "fab-arc"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "arc"
radius = 1500
angle = 120
inlet_length = 300
outlet_length = 400
[mesh]
cells_across = 4
[fabrication]
mould_margin = "1.5mm"
base_thickness = 800
dxf_unit = "%s"
port_diameter = 750
"""

TRAPEZOID_SPIRAL = """
name = "fab-spiral"
unit = "um"
[section]
shape = "trapezoid"
width = 300
height_inner = 40
height_outer = 90
[path]
kind = "spiral"
inner_radius = 800
pitch = 500
turns = 1.5
[mesh]
cells_across = 4
"""

CHAMBERS = """
name = "fab-chambers"
unit = "um"
[section]
width = 100
height = 50
[path]
kind = "chambers"
count = 2
chamber_length = 400
chamber_width = 500
throat_length = 300
one_sided = true
[mesh]
cells_across = 4
"""

DESIGNS = {"arc": ARC % "um", "trapezoid-spiral": TRAPEZOID_SPIRAL, "chambers": CHAMBERS}
# the same designs' volumes worked by hand (tests/hand_reference.py: Pappus in the general form,
# Goodman & Goodman 1969; the Archimedean arc length in closed form; chambers as boxes), m^3
HAND_VOLUMES = {
    "arc": hand.volume({"width": 200, "height": 50},
                       {"kind": "arc", "radius": 1500, "angle": 120, "inlet_length": 300, "outlet_length": 400}),
    "trapezoid-spiral": hand.volume({"shape": "trapezoid", "width": 300, "height_inner": 40, "height_outer": 90},
                                    {"kind": "spiral", "inner_radius": 800, "pitch": 500, "turns": 1.5}),
    "chambers": hand.volume({"width": 100, "height": 50},
                            {"kind": "chambers", "count": 2, "chamber_length": 400, "chamber_width": 500,
                             "throat_length": 300, "one_sided": True}),
}
OPTIONS = WriteOptions()
STL_VOLUME_TOL = 1e-3  # chords of 2 pi / 180 cut off ~(pi/180)^2/6 = 5e-5 of a round wall; 20x margin


def _shoelace(points: np.ndarray) -> float:
    x, y = points[:, 0], points[:, 1]
    return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


def test_fabrication_formats_are_registered_as_design_writers():
    assert set(fabrication_formats()) == {"step", "stl", "mould.stl", "dxf"}
    assert all(FORMATS[n].source == "design" for n in fabrication_formats())
    assert FORMATS["msh"].source == "mesh"


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_stl_is_watertight_and_holds_the_analytic_volume(tmp_path, name):
    design = loads_design(DESIGNS[name])
    (path,) = write_stl(design, tmp_path, design.name, OPTIONS)
    surface = trimesh.load(path, file_type="stl", force="mesh")
    assert surface.is_watertight
    assert surface.is_winding_consistent
    assert surface.volume > 0  # outward normals
    exact = HAND_VOLUMES[name]  # m^3; the STL is in mm
    assert surface.volume * 1e-9 == pytest.approx(exact, rel=STL_VOLUME_TOL, abs=0)


@pytest.mark.parametrize("name", ["arc", "chambers"])
def test_mould_cavity_volume_equals_channel_volume(tmp_path, name):
    design = loads_design(DESIGNS[name])
    (path,) = write_mould_stl(design, tmp_path, design.name, OPTIONS)
    mould = trimesh.load(path, file_type="stl", force="mesh")
    assert mould.is_watertight and mould.is_winding_consistent
    low, high = mould_box(design)
    plate = float(np.prod(high - low))  # mm^3
    cavity = mould.volume - plate  # what the cast elastomer leaves open
    assert cavity * 1e-9 == pytest.approx(HAND_VOLUMES[name], rel=STL_VOLUME_TOL, abs=0)
    fab = design.fabrication
    # the plate: base_thickness thick, flat bottom; the channel stands proud by its height
    assert mould.bounds[0][2] == pytest.approx(low[2], abs=1e-5)  # binary STL stores float32
    assert (high - low)[2] == pytest.approx(fab.base_thickness * 1e3, rel=1e-12)
    assert mould.bounds[1][2] - high[2] == pytest.approx(design.section.max_height * 1e3, abs=1e-5)


def test_mould_plate_reaches_the_margin_beyond_the_footprint():
    design = loads_design(ARC % "um")
    low, high = mould_box(design)
    # arc about the origin from (R, 0) heading +y; leads: inlet below y = 0, outlet toward -x
    R, w, Li, Lo = 1.5, 0.2, 0.3, 0.4
    a = math.radians(120)
    end = np.array([R * math.cos(a), R * math.sin(a)])
    heading = np.array([-math.sin(a), math.cos(a)])  # tangent at the end of the arc
    tip = end + Lo * heading
    normal = np.array([heading[1], -heading[0]])
    xs = [R + w / 2, R - w / 2, tip[0] + w / 2 * normal[0], tip[0] - w / 2 * normal[0]]
    assert low[0] == pytest.approx(min(xs) - 1.5, abs=1e-6)
    assert high[0] == pytest.approx(R + w / 2 + 1.5, abs=1e-6)
    assert low[1] == pytest.approx(-Li - 1.5, abs=1e-6)


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_step_reads_back_in_millimetres_with_the_exact_volume(tmp_path, name):
    import gmsh

    from chanmesh.gmshlayer.session import gmsh_session

    design = loads_design(DESIGNS[name])
    (path,) = write_step(design, tmp_path, design.name, OPTIONS)
    assert "SI_UNIT(.MILLI.,.METRE.)" in path.read_text()
    with gmsh_session():
        shapes = gmsh.model.occ.importShapes(str(path))
        gmsh.model.occ.synchronize()
        vols = [t for d, t in shapes if d == 3]
        assert len(vols) == 1
        volume = gmsh.model.occ.getMass(3, vols[0]) * 1e-9
    # OCC's exact solids for arcs and boxes; the spiral is a spline pipe, whose volume was
    # measured 4.6e-6 below the exact one here (1e-5 allowed); arcs and boxes 1e-13
    assert volume == pytest.approx(HAND_VOLUMES[name], rel=1e-5, abs=0)


@pytest.mark.parametrize("unit, per_metre, insunits", [("um", 1e6, 13), ("mm", 1e3, 4)])
def test_dxf_outline_encloses_the_analytic_plan_area(tmp_path, unit, per_metre, insunits):
    design = loads_design(ARC % unit)
    (path,) = write_dxf(design, tmp_path, design.name, OPTIONS)
    doc = ezdxf.readfile(path)
    assert doc.header["$INSUNITS"] == insunits
    space = doc.modelspace()
    outlines = space.query(f'LWPOLYLINE[layer=="{OUTLINE_LAYER}"]')
    assert len(outlines) == 1 and outlines[0].closed
    pts = np.array([(x, y) for x, y, *_ in outlines[0].get_points()]) / per_metre
    # plan area w L (offset-curve length, Goodman & Goodman 1969 as in geometry.reference);
    # chords every w/32 on R = 1.5 mm lose ~ (chord angle)^2 / 12 ~ 1.4e-7 of it
    plan = hand.plan_area({"width": 200, "height": 50},
                          {"kind": "arc", "radius": 1500, "angle": 120, "inlet_length": 300, "outlet_length": 400})
    assert _shoelace(pts) == pytest.approx(plan, rel=1e-5, abs=0)
    circles = space.query(f'CIRCLE[layer=="{PORT_LAYER}"]')
    assert len(circles) == 2
    assert all(c.dxf.radius == pytest.approx(0.5 * 750e-6 * per_metre) for c in circles)
    centres = sorted((c.dxf.center.x / per_metre, c.dxf.center.y / per_metre) for c in circles)
    inlet = (1.5e-3, -0.3e-3)  # start of the inlet lead, on the centreline
    assert any(np.allclose(c, inlet, atol=1e-9) for c in centres)


def test_dxf_of_chambers_is_exact():
    design = loads_design(CHAMBERS)
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as folder:
        (path,) = write_dxf(design, Path(folder), design.name, OPTIONS)
        outline = ezdxf.readfile(path).modelspace().query("LWPOLYLINE")[0]
        pts = np.array([(x, y) for x, y, *_ in outline.get_points()]) * 1e-6
    # two one-sided chambers: w L + count * chamber_length * (chamber_width - w), by hand
    L = 3 * 300e-6 + 2 * 400e-6
    exact = 100e-6 * L + 2 * 400e-6 * (500e-6 - 100e-6)
    assert _shoelace(pts) == pytest.approx(exact, rel=1e-12, abs=0)


def test_build_stages_fabrication_files_and_lists_them_in_the_manifest(tmp_path):
    design = loads_design(ARC % "mm")
    result = build(design, tmp_path, formats=("msh", "step", "stl", "mould.stl", "dxf"))
    names = {e["name"] for e in result.manifest["files"]}
    assert names == {f"fab-arc.{s}" for s in ("msh", "step", "stl", "mould.stl", "dxf")} | {"report.html"}
    for e in result.manifest["files"]:
        assert (tmp_path / e["name"]).stat().st_size == e["bytes"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".chanmesh-stage")]
    assert result.manifest["design"]["fabrication"]["dxf_unit"] == "mm"


@pytest.mark.parametrize(
    "line, key",
    [
        ('dxf_unit = "cm"', "fabrication.dxf_unit"),
        ("base_thickness = -5", "fabrication.base_thickness"),
        ("mould_margin = 0", "fabrication.mould_margin"),
        ("port_diameter = -1", "fabrication.port_diameter"),
        ("margin = 3", "fabrication.margin"),
    ],
)
def test_bad_fabrication_keys_name_the_key(line, key):
    text = TRAPEZOID_SPIRAL + "[fabrication]\n" + line + "\n"
    with pytest.raises(DesignError) as err:
        loads_design(text)
    assert err.value.key == key


def test_build_command_overrides_fabrication_options(tmp_path, capsys):
    from chanmesh.cli import main

    design = tmp_path / "d.toml"
    design.write_text(ARC % "um")
    out = tmp_path / "out"
    argv = ["build", str(design), "--out", str(out), "--format", "dxf", "--quiet",
            "--dxf-unit", "mm", "--port-diameter", "1.2mm", "--base-thickness", "1mm"]
    assert main(argv) == 0
    doc = ezdxf.readfile(out / "fab-arc.dxf")
    assert doc.header["$INSUNITS"] == 4
    assert {round(c.dxf.radius, 9) for c in doc.modelspace().query("CIRCLE")} == {0.6}
    assert main(["build", str(design), "--out", str(out), "--format", "dxf", "--base-thickness=-1mm"]) == 2
    assert "fabrication.base_thickness" in capsys.readouterr().err
