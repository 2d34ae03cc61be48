"""Straight and segments paths, split inlets: checked against hand-worked geometry.

Every reference here is computed in the test from the design's numbers alone (plane
trigonometry, Pappus's centroid theorem, the closed-form Archimedean arc length), sharing no
code with ``chanmesh.geometry.centerline``. The designs are made up for testing.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import numpy as np
import pytest
import pyvista as pv

from chanmesh.build import build
from chanmesh.design import design_from_dict, loads_design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.reference import reference_of
from chanmesh.geometry.stations import station_arc_length
from chanmesh.meshing.hex import mesh_hex
from chanmesh.meshing.tet import mesh_tet
from chanmesh.sweep.plan import apply, parse_vary

ROOT = Path(__file__).resolve().parents[1]

# widths 200 um: an S-bend with odd angles, a tighter right turn and a spiral piece
S_PIECES = [("line", 700.0), ("arc", 500.0, 137.0), ("arc", 300.0, -211.0), ("line", 400.0), ("arc", 450.0, 64.0)]


def _toml_piece(p: tuple) -> str:
    if p[0] == "line":
        return f"{{ line = {p[1]} }}"
    if p[0] == "arc":
        return f"{{ arc = {p[1]}, angle = {p[2]} }}"
    return f"{{ spiral = {p[1]}, pitch = {p[2]}, turns = {p[3]} }}"


def segments_text(pieces, section: str = "width = 200\nheight = 50", mesh: str = "cells_across = 4",
                  extra: str = "", path_extra: str = "") -> str:
    segs = ", ".join(_toml_piece(p) for p in pieces)
    return (f'name = "segs"\nunit = "um"\n[section]\n{section}\n[path]\nkind = "segments"\n'
            f"segments = [{segs}]\n{path_extra}\n[mesh]\n{mesh}\n{extra}")


def hand_end_pose(pieces) -> tuple[float, float, float]:
    """End point (um) and heading (rad) by plane trigonometry: a line moves L along the heading;
    an arc of radius R through angle a moves along its chord 2 R sin(|a|/2), which points at
    the heading turned by a/2, and turns the heading by a."""
    x = y = h = 0.0
    for p in pieces:
        if p[0] == "line":
            x, y = x + p[1] * math.cos(h), y + p[1] * math.sin(h)
        else:
            a = math.radians(p[2])
            chord = 2 * p[1] * math.sin(abs(a) / 2)
            x, y = x + chord * math.cos(h + a / 2), y + chord * math.sin(h + a / 2)
            h += a
    return x, y, h


def spiral_length(r0: float, pitch: float, turns: float) -> float:
    """Archimedean arc length r = r0 + c theta (handbook of plane curves):
    s = c/2 [phi sqrt(1 + phi^2) + asinh(phi)] between phi = r0/c and r0/c + theta."""
    c = pitch / (2 * math.pi)
    g = lambda phi: 0.5 * c * (phi * math.sqrt(1 + phi * phi) + math.asinh(phi))  # noqa: E731
    return g(r0 / c + 2 * math.pi * abs(turns)) - g(r0 / c)


def spiral_turning(r0: float, pitch: float, turns: float) -> float:
    """Heading change of an Archimedean spiral: polar angle theta plus the change of the angle
    psi = atan(r / c) between radius and tangent (tan psi = r / (dr/dtheta))."""
    c = pitch / (2 * math.pi)
    th = 2 * math.pi * abs(turns)
    return math.copysign(th + math.atan((r0 + c * th) / c) - math.atan(r0 / c), turns)


def hand_volume(pieces, area: float, u_c: float) -> float:
    """Pappus's centroid theorem per piece (Goodman & Goodman 1969, general form): a line sweeps
    A L; a bend sweeps A |a| (R + u_c) turning left, where n = t x z points away from the
    centre, and A |a| (R - u_c) turning right; a spiral piece sweeps A (L + u_c Phi) (offset
    curve of a plane curve: length L + u Phi for total signed turning Phi)."""
    v = 0.0
    for p in pieces:
        if p[0] == "line":
            v += area * p[1]
        elif p[0] == "arc":
            a = math.radians(p[2])
            v += area * abs(a) * (p[1] + math.copysign(u_c, a))
        else:
            v += area * (spiral_length(*p[1:]) + u_c * spiral_turning(*p[1:]))
    return v


def test_outlet_pose_is_the_exact_sum_of_the_pieces():
    d = loads_design(segments_text(S_PIECES))
    line = centerline_of(d)
    x, y, h = hand_end_pose(S_PIECES)
    end = line.points(np.array([line.length]))[0] * 1e6
    t = line.tangents(np.array([line.length]))[0]
    assert end[:2] == pytest.approx([x, y], abs=1e-9)  # um
    assert t[:2] == pytest.approx([math.cos(h), math.sin(h)], abs=1e-13)
    # total length: lines plus R |a| per bend (arc length of a circle)
    L = sum(p[1] if p[0] == "line" else p[1] * math.radians(abs(p[2])) for p in S_PIECES)
    assert line.length * 1e6 == pytest.approx(L, rel=1e-14)


def test_outlet_face_of_the_tet_mesh_sits_at_the_hand_worked_end():
    d = loads_design(segments_text(S_PIECES))
    mesh = mesh_tet(d)
    x, y, h = hand_end_pose(S_PIECES)
    tag = next(g.tag for g in mesh.groups if g.name == "outlet")
    tri = np.concatenate([b.cells[b.tags == tag] for b in mesh.facets])
    p = mesh.points[tri]
    cross = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    area = 0.5 * np.linalg.norm(cross, axis=1)
    centroid = (area[:, None] * p.mean(axis=1)).sum(axis=0) / area.sum()
    # a rectangle's centroid is its centre, which is the centreline point (plane geometry)
    assert centroid[:2] * 1e6 == pytest.approx([x, y], abs=1e-6)
    normal = cross.sum(axis=0) / np.linalg.norm(cross.sum(axis=0))
    assert abs(normal[:2] @ [math.cos(h), math.sin(h)]) == pytest.approx(1.0, abs=1e-9)


@pytest.mark.parametrize("section, u_c", [
    ("width = 200\nheight = 50", 0.0),
    # trapezoid a = 40 at u = -w/2, b = 80 at +w/2: centroid u_c = w (b - a) / (6 (a + b)) (handbook)
    ('shape = "trapezoid"\nwidth = 200\nheight_inner = 40\nheight_outer = 80', 200 * 40 / (6 * 120)),
])
def test_volume_is_pappus_per_piece(section, u_c):
    # a spiral piece first (an outward spiral grows over anything laid before it), turning right
    pieces = [("spiral", 600.0, 400.0, -1.25), ("line", 500.0), ("arc", 500.0, 120.0), ("line", 300.0), ("arc", 300.0, -97.0)]
    d = loads_design(segments_text(pieces, section=section))
    area = 200 * (50 if u_c == 0 else 60)  # um^2: w h, trapezoid w (a + b) / 2
    assert reference_of(d).volume * 1e18 == pytest.approx(hand_volume(pieces, area, u_c), rel=1e-12)
    L = sum(p[1] if p[0] == "line" else (p[1] * math.radians(abs(p[2])) if p[0] == "arc" else spiral_length(*p[1:]))
            for p in pieces)
    assert centerline_of(d).length * 1e6 == pytest.approx(L, rel=1e-12)


def _boundary_faces(mesh) -> list[tuple[int, ...]]:
    """Faces of the volume cells that belong to one cell only (sorted node tuples)."""
    local = {"tetra": [(0, 1, 2), (0, 1, 3), (0, 2, 3), (1, 2, 3)],
             "hexahedron": [(0, 1, 2, 3), (4, 5, 6, 7), (0, 1, 5, 4), (1, 2, 6, 5), (2, 3, 7, 6), (3, 0, 4, 7)]}
    count: dict[tuple[int, ...], int] = {}
    for b in mesh.volumes:
        for f in local[b.type]:
            for face in np.sort(b.cells[:, f], axis=1):
                key = tuple(int(v) for v in face)
                count[key] = count.get(key, 0) + 1
    return [k for k, n in count.items() if n == 1]


@pytest.mark.parametrize("mesher", [mesh_tet, mesh_hex])
def test_split_faces_have_their_fractions_and_every_boundary_facet_one_group(mesher):
    extra = "[inlets]\nsplit = [0.25, 0.75]\n[outlets]\nsplit = [0.2, 0.5, 0.3]\n"
    d = loads_design(segments_text(S_PIECES[:3], extra=extra))
    mesh = mesher(d)
    names = {g.tag: g.name for g in mesh.groups if g.dim == 2}
    assert list(names.values()) == ["inlet_1", "inlet_2", "outlet_1", "outlet_2", "outlet_3", "wall"]
    w, h = 200e-6, 50e-6
    for name, frac in zip(["inlet_1", "inlet_2", "outlet_1", "outlet_2", "outlet_3"], [0.25, 0.75, 0.2, 0.5, 0.3]):
        tag = next(t for t, n in names.items() if n == name)
        area = 0.0
        for b in mesh.facets:
            p = mesh.points[b.cells[b.tags == tag]]
            # triangles, or quads split into two triangles (planar end faces)
            for tri in ([0, 1, 2], [0, 2, 3]) if b.type == "quad" else ([0, 1, 2],):
                q = p[:, tri]
                area += 0.5 * np.linalg.norm(np.cross(q[:, 1] - q[:, 0], q[:, 2] - q[:, 0]), axis=1).sum()
        assert area == pytest.approx(frac * w * h, rel=1e-9), name  # a slice of a rectangle: fraction x w h
    # inlet_1 lies on the u = -w/2 side: left of +x looking downstream, so at y > 0
    tag1 = next(t for t, n in names.items() if n == "inlet_1")
    ys = np.concatenate([mesh.points[b.cells[b.tags == tag1]][..., 1].ravel() for b in mesh.facets])
    assert ys.min() > 0.5 * w - 1e-12 - w * 0.25 - 1e-12 and ys.max() == pytest.approx(0.5 * w)
    # every boundary facet (a face of exactly one volume cell) is tagged, once, in one group
    tagged = [tuple(sorted(int(v) for v in c)) for b in mesh.facets for c in b.cells]
    assert len(tagged) == len(set(tagged))
    assert set(tagged) == set(_boundary_faces(mesh))


def test_hex_volume_converges_at_second_order_on_an_s_bend():
    """Straight-sided cells cut chords across each bend; a chord of angle d keeps sin(d)/d of its
    annular sector, an error d^2/6 (geometry handbook), so the volume error falls as the square
    of the cell length: the slope fitted by np.polyfit must be -2 +/- 0.15. Volumes by VTK
    (pyvista cell sizes); the exact volume by hand (A L, rectangle centred on the centreline)."""
    pieces = [("line", 300.0), ("arc", 500.0, 120.0), ("arc", 300.0, -150.0), ("line", 200.0)]
    exact = hand_volume(pieces, 200 * 50, 0.0) * 1e-18
    counts, errors = [], []
    for n in (24, 48, 96):
        d = loads_design(segments_text(pieces, mesh=f'cells = "hex"\ncells_across = 4\ncells_along = {n}'))
        mesh = mesh_hex(d)
        cells = mesh.volumes[0].cells
        grid = pv.UnstructuredGrid({pv.CellType.HEXAHEDRON: cells}, mesh.points)
        vol = float(grid.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"].sum())
        counts.append(n)
        errors.append(abs(vol / exact - 1.0))
    slope = np.polyfit(np.log(counts), np.log(errors), 1)[0]
    assert -2.15 < slope < -1.85, (counts, errors)


def test_straight_kind_is_a_box():
    d = loads_design('name = "s"\n[section]\nwidth = 200\nheight = 50\n[path]\nkind = "straight"\nlength = 1500\n'
                     '[mesh]\ncells = "hex"\ncells_across = 4\n')
    mesh = mesh_hex(d)
    grid = pv.UnstructuredGrid({pv.CellType.HEXAHEDRON: mesh.volumes[0].cells}, mesh.points)
    vol = float(grid.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"].sum())
    assert vol == pytest.approx(200e-6 * 50e-6 * 1500e-6, rel=1e-12)  # box: w h L
    with pytest.raises(DesignError, match=r"path.length"):
        loads_design('name = "s"\n[section]\nwidth = 200\nheight = 50\n[path]\nkind = "straight"\nlength = -1\n')


def test_stations_count_angles_over_bends():
    d = loads_design(segments_text(S_PIECES))
    # bend 2 starts after the line and bend 1: 700 + 500 * 137 deg; 90 deg into it at radius 300
    s1 = 700 + 500 * math.radians(137)
    assert station_arc_length(d, "bend=2:90deg") * 1e6 == pytest.approx(s1 + 300 * math.radians(90), rel=1e-13)
    # '200deg' swept over all bends, left and right alike: 137 in bend 1, then 63 into bend 2
    assert station_arc_length(d, "200deg") * 1e6 == pytest.approx(s1 + 300 * math.radians(63), rel=1e-13)
    with pytest.raises(DesignError, match="bends 1 to 3"):
        station_arc_length(d, "bend=4:10deg")


@pytest.mark.parametrize("pieces, words", [
    # a right U-turn of radius 104 um leaves 208 um centre to centre (< 210 um needed, beyond the 1 % slack)
    ([("line", 800.0), ("arc", 100.5, 180.0), ("line", 800.0)], "path.segments[2]"),
    # three quarters of a circle bring the path back across its own first straight
    ([("line", 1000.0), ("arc", 300.0, 270.0), ("line", 1000.0)], "must not cross"),
    ([("line", 800.0), ("arc", 90.0, 90.0)], "path.segments[1].arc"),
    ([("line", 800.0), ("arc", 300.0, 0.0)], "path.segments[1].angle"),
    ([("spiral", 500.0, 150.0, 2.0)], "path.segments[0].pitch"),
])
def test_infeasible_pieces_name_the_key(pieces, words):
    with pytest.raises(DesignError) as err:
        loads_design(segments_text(pieces))
    assert words in str(err.value)


def test_tight_bends_that_open_out_are_accepted():
    # a 90-degree bend barely wider than half the width, then straights moving apart: no two runs meet
    loads_design(segments_text([("line", 500.0), ("arc", 110.0, 90.0), ("line", 500.0), ("arc", 110.0, -90.0),
                                ("line", 500.0)]))


def test_split_inlets_are_checked_like_outlets():
    with pytest.raises(DesignError, match=r"inlets.split.*sum to 1"):
        loads_design(segments_text(S_PIECES[:1], extra="[inlets]\nsplit = [0.3, 0.3]\n"))
    with pytest.raises(DesignError, match=r"inlets.split\[1\]"):
        loads_design(segments_text(S_PIECES[:1], extra="[inlets]\nsplit = [1.2, -0.2]\n"))


def test_sweep_sets_a_piece_of_the_path():
    data = tomllib.loads(segments_text(S_PIECES))
    v = parse_vary("path.segments[1].arc=400,600")
    radii = [design_from_dict(apply(data, {v.key: r})).path.segments[1].radius for r in v.values]
    assert radii == pytest.approx([400e-6, 600e-6])
    with pytest.raises(DesignError, match="has no item 9"):
        apply(data, {"path.segments[9].arc": 1})


@pytest.mark.parametrize("template", ["asymmetric-serpentine", "two-inlet-spiral"])
@pytest.mark.parametrize("cells", ["tet", "hex"])
def test_templates_build_with_both_meshers(template, cells, tmp_path):
    """(test_cli_build.test_each_template_builds also builds every template with tetrahedra.)"""
    data = tomllib.loads((ROOT / "templates" / f"{template}.toml").read_text())
    data["mesh"].update(cells=cells, cells_across=4)
    d = design_from_dict(data)
    build(d, tmp_path, formats=("vtu",))
    grid = pv.read(tmp_path / f"{d.name}.vtu")
    kind = pv.CellType.TETRA if cells == "tet" else pv.CellType.HEXAHEDRON
    vols = grid.extract_cells(np.flatnonzero(np.asarray(grid.celltypes) == kind))
    vol = float(vols.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"].sum())
    pieces = [(("line", p.length * 1e6) if p.kind == "line" else
               ("arc", p.radius * 1e6, p.angle) if p.kind == "arc" else ("spiral", p.radius * 1e6, p.pitch * 1e6, p.turns))
              for p in d.path.segments]
    exact = hand_volume(pieces, d.section.width * d.section.height * 1e12, 0.0) * 1e-18
    # chords across bends at 4 cells across: within 1 % (hex: 5 degrees a cell; common practice, no source)
    assert vol == pytest.approx(exact, rel=1e-2)
    expected = [*d.inlets.names, *d.outlets.names, "wall"]
    assert [n for n in grid.field_data.keys() if not n.startswith("section_")][: len(expected)] == expected


def test_dean_stations_state_the_inner_wall_per_bend():
    from chanmesh.numbers import regime

    d = loads_design(segments_text(S_PIECES))
    sts = regime.stations_of(d)
    assert [(st.label, st.side, st.inner_wall) for st in sts] == [
        ("bend 1", "left", "u = -w/2"), ("bend 2", "right", "u = +w/2"), ("bend 3", "left", "u = -w/2")]
    assert [st.curvature_radius for st in sts] == pytest.approx([500e-6, 300e-6, 450e-6], rel=1e-12)
    # each station at the middle of its arc: 700 + 500 * 137 deg / 2, ... (arc length R |a|)
    s_mid = 700 + 500 * math.radians(137) / 2
    assert sts[0].s * 1e6 == pytest.approx(s_mid, rel=1e-13)


def test_inlet_shares_of_a_trapezoid_by_hand():
    from chanmesh.numbers.report import inlet_shares

    d = loads_design(segments_text(S_PIECES[:2], section='shape = "trapezoid"\nwidth = 200\nheight_inner = 40\nheight_outer = 80',
                                   extra="[inlets]\nsplit = [0.25, 0.75]\n"))
    rows = inlet_shares(d, 1e-9)
    # the height runs linearly from 40 um at u = -w/2 to 80 um at +w/2: 50 um at the split
    # (u = -50 um); trapezoid areas 50 (40 + 50) / 2 and 150 (50 + 80) / 2 um^2 of 200 (40 + 80) / 2
    a1, a2, total = 50 * 45.0, 150 * 65.0, 200 * 60.0
    assert [r["area_m2"] * 1e12 for r in rows] == pytest.approx([a1, a2], rel=1e-12)
    assert [r["rate_m3_s"] for r in rows] == pytest.approx([1e-9 * a1 / total, 1e-9 * a2 / total], rel=1e-12)
