"""Pictures: plan view (size, not blank, scale bar true to the drawing), 3D mesh view, palette.

The plan view's scale is checked against the design itself: the channel's extent in pixels,
measured in the image, divided by its extent in mm worked out by hand from the path
(arc about the origin from (R, 0), leads straight on), gives the drawing's px/mm; the scale
bar measured in the same image must be ``bar_mm`` times that. The palette is checked with
colorspacious, a general colour-science library (CVD model of Machado, Oliveira & Fernandes
2009; CAM02-UCS distances, Luo, Cui & Li 2006).
"""

from __future__ import annotations

import io
import itertools
import math

import numpy as np
import pytest
from PIL import Image

from chanmesh.cli import main
from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from chanmesh.geometry.stations import station_arc_length
from chanmesh.meshing.registry import mesher_for
from chanmesh.report.palette import PALETTE, SCALE_BAR, WALL
from chanmesh.report.plan_view import nice_length, plan_picture
from chanmesh.report.view3d import RenderUnavailable, mesh_picture

ARC = """
name = "pic-arc"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "arc"
radius = 2000
angle = 90
inlet_length = 500
outlet_length = 800
[outlets]
split = [0.4, 0.6]
[mesh]
cells_across = 4
sections = [0.5, "45deg", "1.2mm"]
"""


def _rgb(hex_colour: str) -> np.ndarray:
    return np.array([int(hex_colour[i:i + 2], 16) for i in (1, 3, 5)])


def _image(png: bytes) -> np.ndarray:
    return np.asarray(Image.open(io.BytesIO(png)).convert("RGB")).astype(int)


def _not_blank(img: np.ndarray) -> None:
    inked = np.any(np.abs(img - 255) > 30, axis=2)
    assert 0.01 < inked.mean() < 0.9  # some drawing, not a filled or empty frame
    assert img.std() > 10


@pytest.fixture(scope="module")
def arc():
    return loads_design(ARC)


@pytest.fixture(scope="module")
def arc_mesh(arc):
    return mesher_for(arc).mesh(arc)


@pytest.fixture(scope="module")
def fine_arc():
    return loads_design(ARC.replace("cells_across = 4", "cells_across = 10"))


@pytest.fixture(scope="module")
def fine_arc_mesh(fine_arc):
    return mesher_for(fine_arc).mesh(fine_arc)


@pytest.mark.parametrize("size", [(900, 640), (1600, 1200)])
def test_plan_view_channel_covers_the_plan_area(arc, size):
    """The channel's fill colour covers the footprint worked by hand, w L with
    L = inlet_length + R pi / 2 + outlet_length (offset-curve length, Goodman & Goodman 1969),
    at the picture's own scale, less the outline stroke drawn over each wall: measured as a
    2.8 px strip of the channel's width at three picture sizes (2 % allowed)."""
    pic = plan_picture(arc, *size)
    img = _image(pic.png)
    assert img.shape == (size[1], size[0], 3)
    _not_blank(img)
    fill = np.all(img == _rgb(WALL), axis=2).sum()
    w_px, length_px = 0.2 * pic.px_per_mm, (0.5 + 2.0 * math.pi / 2 + 0.8) * pic.px_per_mm
    assert fill == pytest.approx((w_px - 2.8) * length_px, rel=0.02)


def test_plan_view_scale_bar_matches_the_drawing_scale(arc):
    pic = plan_picture(arc, 1000, 700)
    img = _image(pic.png)
    # the channel's extent in pixels: pixels of the fill colour (interior, not anti-aliased)
    fill = np.all(img == _rgb(WALL), axis=2)
    cols, rows = np.nonzero(fill.any(axis=0))[0], np.nonzero(fill.any(axis=1))[0]
    # by hand: x from -outlet_length (outlet lead toward -x at y = R) to R + w/2;
    #          y from -inlet_length (inlet lead below (R, 0)) to R + w/2
    R, w, Li, Lo = 2.0, 0.2, 0.5, 0.8
    x_mm, y_mm = (R + w / 2) + Lo, (R + w / 2) + Li
    px_per_mm_x = (cols[-1] - cols[0] + 1) / x_mm
    px_per_mm_y = (rows[-1] - rows[0] + 1) / y_mm
    assert px_per_mm_x == pytest.approx(px_per_mm_y, rel=0.01)  # equal aspect
    assert px_per_mm_x == pytest.approx(pic.px_per_mm, rel=0.01)
    # the bar: pure black appears nowhere else in the picture
    bar = np.all(img == _rgb(SCALE_BAR), axis=2)
    lengths = bar.sum(axis=1)
    assert lengths.max() == pytest.approx(pic.bar_px, abs=1)
    assert bar[pic.bar_row].sum() == pytest.approx(pic.bar_px, abs=1)
    assert lengths.max() / px_per_mm_x == pytest.approx(pic.bar_mm, rel=0.01)


def test_nice_length_picks_1_2_5_steps():
    assert nice_length(0.73) == 0.5
    assert nice_length(1.9) == 1.0
    assert nice_length(4.99) == 2.0
    assert nice_length(37.0) == 20.0


def test_mesh_view_mpl_has_the_size_and_shows_the_groups(arc, arc_mesh):
    img = _image(mesh_picture(arc_mesh, arc, 800, 600, engine="mpl"))
    assert img.shape == (600, 800, 3)
    _not_blank(img)
    # the legend swatches are drawn in the exact group colours
    for colour in ("#1D4E89", "#E69A2E", "#9B6FC6", WALL):
        assert np.all(img == _rgb(colour), axis=2).sum() > 50, colour


def test_mesh_view_vtk_renders_off_screen(arc, arc_mesh):
    try:
        png = mesh_picture(arc_mesh, arc, 640, 480, engine="vtk")
    except RenderUnavailable as exc:
        pytest.skip(f"no off-screen OpenGL here: {exc}")
    img = _image(png)
    assert img.shape == (480, 640, 3)
    _not_blank(img)


def test_palette_stays_apart_for_colour_blind_readers():
    cs = pytest.importorskip("colorspacious", reason="colorspacious (test extra) checks the palette")
    rgb = [_rgb(c) / 255.0 for c in PALETTE]
    for cvd in (None, "protanomaly", "deuteranomaly", "tritanomaly"):
        seen = [np.clip(cs.cspace_convert(c, {"name": "sRGB1+CVD", "cvd_type": cvd, "severity": 100}, "sRGB1"), 0, 1)
                if cvd else c for c in rgb]
        ucs = [cs.cspace_convert(c, "sRGB1", "CAM02-UCS") for c in seen]
        closest = min(np.linalg.norm(a - b) for a, b in itertools.combinations(ucs, 2))
        # 13 units: our threshold, several times a just-noticeable difference (~1-2; common practice, no source)
        assert closest > 13.0, cvd


def test_stations_resolve_to_arc_lengths(arc):
    R, Li = 2e-3, 0.5e-3
    L = Li + R * math.pi / 2 + 0.8e-3
    assert station_arc_length(arc, 0.5) == pytest.approx(0.5 * L)
    assert station_arc_length(arc, "45deg") == pytest.approx(Li + R * math.pi / 4, rel=1e-6)
    assert station_arc_length(arc, "1.2mm") == pytest.approx(1.2e-3)
    for bad in (1.5, "200deg", "9mm", "turn=x", True):
        with pytest.raises(DesignError):
            station_arc_length(arc, bad)


def test_preview_command_writes_both_pictures(tmp_path):
    design = tmp_path / "d.toml"
    design.write_text(ARC)
    assert main(["preview", str(design), "--out", str(tmp_path / "pics"), "--size", "640x480"]) == 0
    for suffix in ("plan", "mesh"):
        img = Image.open(tmp_path / "pics" / f"pic-arc.{suffix}.png")
        assert img.size == (640, 480)


def test_preview_command_refuses_a_bad_size(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text(ARC)
    assert main(["preview", str(design), "--out", str(tmp_path), "--size", "64x9999"]) == 2
    assert "--size" in capsys.readouterr().err
    assert not list(tmp_path.glob("*.png"))


def test_auto_engine_needs_no_opengl(arc, arc_mesh, monkeypatch):
    import chanmesh.report.view3d as view3d

    def no_gl(*args, **kwargs):
        raise RenderUnavailable("no OpenGL context (simulated)")

    monkeypatch.setattr(view3d, "_plotter", no_gl)
    img = _image(mesh_picture(arc_mesh, arc, 640, 480, engine="auto"))
    assert img.shape == (480, 640, 3)
    _not_blank(img)
    with pytest.raises(RenderUnavailable):
        mesh_picture(arc_mesh, arc, 640, 480, engine="vtk")


def _surface_area(surface) -> float:
    from chanmesh.report.drawing_surface import _facet_areas

    return sum(float(_facet_areas(surface.points, c).sum()) for blocks in surface.polygons.values() for c in blocks)


def test_merged_drawing_surface_keeps_the_shape_and_every_group(fine_arc_mesh, monkeypatch):
    import chanmesh.report.drawing_surface as ds
    from chanmesh.report.drawing_surface import drawing_surface

    monkeypatch.setattr(ds, "FEW", 40)  # a small mesh: let the wall merge well below its size
    whole = drawing_surface(fine_arc_mesh, 10**9, 1e3)
    assert not whole.merged and whole.facets == whole.facets_in_mesh
    limit = whole.facets // 3
    assert limit > 2 * ds.FEW
    merged = drawing_surface(fine_arc_mesh, limit, 1e3)
    assert merged.merged and 0 < merged.facets <= limit + ds.FEW * len(whole.polygons)
    for name, blocks in merged.polygons.items():  # each group within its share, or FEW
        mine = sum(len(c) for c in whole.polygons[name])
        assert sum(len(c) for c in blocks) <= max(limit * mine // whole.facets, min(mine, ds.FEW))
    assert set(merged.polygons) == set(whole.polygons)  # no group merged away, ports included
    # the surface keeps its area and its extent: each cluster is drawn at one of its own nodes,
    # corners and edges first, so the outline stays put and the area within 2 % (our tolerance)
    assert _surface_area(merged) == pytest.approx(_surface_area(whole), rel=0.02)
    used = np.unique(np.concatenate([c.ravel() for b in merged.polygons.values() for c in b]))
    assert np.allclose(merged.points[used].min(axis=0), whole.points.min(axis=0), atol=1e-12)
    assert np.allclose(merged.points[used].max(axis=0), whole.points.max(axis=0), atol=1e-12)


def test_cell_edges_are_drawn_on_a_merged_surface(fine_arc, fine_arc_mesh, monkeypatch):
    import chanmesh.report.drawing_surface as ds
    import chanmesh.report.view3d as view3d

    facets = sum(len(b.cells) for b in fine_arc_mesh.facets)
    monkeypatch.setattr(view3d, "DRAW_LIMIT", facets // 5)
    monkeypatch.setattr(ds, "FEW", 40)
    with_edges = _image(mesh_picture(fine_arc_mesh, fine_arc, 800, 600, engine="mpl"))
    monkeypatch.setattr(view3d, "WALL_EDGE", WALL)  # the same picture with the wall's edges hidden
    without = _image(mesh_picture(fine_arc_mesh, fine_arc, 800, 600, engine="mpl"))
    main = slice(60, int(0.69 * 600))  # the main view, above the close-ups
    changed = np.any(np.abs(with_edges[main] - without[main]) > 20, axis=2)
    assert changed.sum() > 1000  # the merged wall's cell edges are drawn, not dropped


def test_every_port_gets_a_close_up_that_faces_the_camera(arc, arc_mesh):
    from chanmesh.report.view3d import closeup_surface, port_names

    ports = port_names(arc_mesh)
    assert ports == ["inlet", "outlet_1", "outlet_2"]
    for port in ports:
        surface, view = closeup_surface(arc_mesh, arc, port)
        assert port in surface.polygons and not surface.merged
        # every facet of the port is in its close-up, and the port's face turns toward the camera
        assert sum(len(c) for c in surface.polygons[port]) == sum(len(b.cells) for b in arc_mesh.facets_of(port))
        p = surface.points
        normals = np.concatenate([np.cross(p[c][:, 2] - p[c][:, 0], p[c][:, -1] - p[c][:, 1])
                                  for c in surface.polygons[port]])
        facing = np.sign(normals @ view)
        assert abs(facing.sum()) == len(facing)  # all one way: the face is seen whole, from one side
        # seen from outside: the camera lies beyond the port's face, away from the channel it closes
        ends = p[np.unique(np.concatenate([c.ravel() for c in surface.polygons[port]]))].mean(axis=0)
        channel = p[np.unique(np.concatenate([c.ravel() for c in surface.polygons["wall"]]))].mean(axis=0)
        assert (ends - channel) @ view > 0


def test_close_up_leaves_out_a_neighbouring_turn():
    from chanmesh.report.view3d import closeup_surface

    spiral = loads_design("""
name = "pic-spiral"
unit = "um"
[section]
width = 100
height = 40
[path]
kind = "spiral"
inner_radius = 400
pitch = 160
turns = 1.5
inlet_length = 100
outlet_length = 100
[mesh]
cells_across = 3
""")
    mesh = mesher_for(spiral).mesh(spiral)
    surface, _ = closeup_surface(mesh, spiral, "inlet")
    used = np.unique(np.concatenate([c.ravel() for b in surface.polygons.values() for c in b]))
    centre = surface.points[np.unique(np.concatenate([c.ravel() for c in surface.polygons["inlet"]]))].mean(axis=0)
    radius = np.hypot(*(surface.points[used][:, :2] - surface.points[used][:, :2].mean(axis=0)).T)
    # the next turn lies a pitch (0.16 mm) out, inside the 1.6-section reach (0.16 mm) of the inlet's
    # centre on one side; only the inlet's own stretch of channel is drawn: every node within
    # half a width plus the reach of the inlet centre
    assert np.all(np.linalg.norm(surface.points[used] - centre, axis=1) <= 0.05 + 0.16 + 0.07)
    assert radius.max() < 1.0


def test_facet_normals_equal_the_cross_product_of_the_diagonals():
    """The column-by-column normals are numpy's cross product of the diagonals (quads) or of
    two edges (triangles), to the bit: half the diagonals' cross product is a planar
    quadrilateral's vector area (Bronshtein & Semendyayev, Handbook of Mathematics, vector
    product; a quad's area = |d1 x d2| / 2)."""
    from chanmesh.report.drawing_surface import facet_normals

    rng = np.random.default_rng(7)
    points = rng.normal(size=(50, 3))
    quads = rng.integers(0, 50, size=(200, 4))
    p = points[quads]
    assert np.array_equal(facet_normals(points, quads), 0.5 * np.cross(p[:, 2] - p[:, 0], p[:, 3] - p[:, 1]))
    tris = quads[:, :3]
    p = points[tris]
    assert np.array_equal(facet_normals(points, tris), 0.5 * np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]))
    square = np.array([[0.0, 0, 0], [2, 0, 0], [2, 3, 0], [0, 3, 0]])  # a 2 x 3 rectangle in the xy plane
    assert np.allclose(facet_normals(square, np.array([[0, 1, 2, 3]])), [[0.0, 0.0, 6.0]])


def test_numbered_surface_gives_the_same_drawing_and_centres(fine_arc_mesh):
    """The main view and the close-ups share the surface numbered once (numbered_surface):
    the merged and unmerged drawings and the facet centres must be those computed from the
    mesh itself, to the bit; the centres are the corners' mean (numpy's mean as reference)."""
    from chanmesh.report.drawing_surface import drawing_surface, numbered_surface, surface_facets
    from chanmesh.report.view3d import facet_centres

    facets = surface_facets(fine_arc_mesh)
    numbered = numbered_surface(fine_arc_mesh, facets)
    total = sum(len(c) for blocks in facets.values() for c in blocks)
    for limit in (10**9, total // 3):
        alone = drawing_surface(fine_arc_mesh, limit, 1e3, facets=facets)
        shared = drawing_surface(fine_arc_mesh, limit, 1e3, facets=facets, numbered=numbered)
        assert np.array_equal(alone.points, shared.points) and alone.cube == shared.cube
        assert list(alone.polygons) == list(shared.polygons)
        for name in alone.polygons:
            assert all(np.array_equal(a, b) for a, b in zip(alone.polygons[name], shared.polygons[name], strict=True))
    centres = facet_centres(fine_arc_mesh, facets, numbered)
    assert np.array_equal(centres, facet_centres(fine_arc_mesh, facets))
    corners = np.concatenate([fine_arc_mesh.points[c].mean(axis=1) * 1e3 for blocks in facets.values() for c in blocks])
    assert np.allclose(centres, corners, rtol=0, atol=1e-12)
