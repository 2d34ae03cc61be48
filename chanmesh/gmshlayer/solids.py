"""The channel solid in gmsh's OpenCASCADE kernel, in millimetres.

Each centreline segment becomes one piece: the cross-section face placed at the segment's start
is extruded along a line, revolved about a bend's centre, or piped along an interpolating
spline through exact spiral points. The pieces are fused into one volume; chamber boxes are
fused on. Revolve and extrude are exact at any scale; the spline keeps within about 0.2 um of
the spiral at 120 or more points a turn (GMSH-NOTES).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import gmsh
import numpy as np

from chanmesh.design.model import ChambersPath, Design
from chanmesh.geometry.centerline import Arc, Centerline, Line, Spiral, centerline_of
from chanmesh.geometry.section import SectionShape, section_shape_of
from chanmesh.gmshlayer.session import MODEL_UNIT

if TYPE_CHECKING:
    from chanmesh.geometry.stations import Outline

SPLINE_POINTS_PER_TURN = 240


def section_face(line: Centerline, shape: SectionShape | Outline, s: float) -> int:
    """Plane surface of the cross-section at arc length s (model units); ``shape`` gives the
    (u, z) corners, the channel's ``SectionShape`` or a station's exact ``Outline``."""
    p = line.points(np.array([s]))[0]
    n = line.normals(np.array([s]))[0]
    occ = gmsh.model.occ
    pts = []
    for u, v in shape.corners:
        q = (p + u * n + v * np.array([0.0, 0.0, 1.0])) / MODEL_UNIT
        pts.append(occ.addPoint(*q))
    lines = [occ.addLine(pts[i], pts[(i + 1) % 4]) for i in range(4)]
    loop = occ.addCurveLoop(lines)
    return occ.addPlaneSurface([loop])


def _piece(line: Centerline, shape: SectionShape, index: int) -> list[tuple[int, int]]:
    occ = gmsh.model.occ
    seg = line.segments[index]
    s0 = float(line.breaks[index])
    face = section_face(line, shape, s0)
    if isinstance(seg, Line):
        d = np.array([math.cos(seg.heading), math.sin(seg.heading), 0.0]) * seg.length / MODEL_UNIT
        out = occ.extrude([(2, face)], *d)
    elif isinstance(seg, Arc):
        cx, cy = (c / MODEL_UNIT for c in seg.center)
        out = occ.revolve([(2, face)], cx, cy, 0.0, 0.0, 0.0, 1.0, seg.sweep)
    elif isinstance(seg, Spiral):
        turns = seg.theta_end / (2 * math.pi)
        k = max(int(math.ceil(SPLINE_POINTS_PER_TURN * turns)), 16)
        theta = np.linspace(0.0, seg.theta_end, k + 1)
        s_local = seg.arclength_at(theta)
        pts = line.points(s0 + s_local) / MODEL_UNIT
        tags = [occ.addPoint(*q) for q in pts]
        spline = occ.addSpline(tags)
        wire = occ.addWire([spline])
        out = occ.addPipe([(2, face)], wire, "DiscreteTrihedron")
    else:  # pragma: no cover - the centreline knows only these three
        raise TypeError(f"unknown segment {seg!r}")
    return [dt for dt in out if dt[0] == 3]


def _chamber_boxes(design: Design, line: Centerline) -> list[tuple[int, int]]:
    path = design.path
    assert isinstance(path, ChambersPath)
    shape = section_shape_of(design)
    w, h = shape.width, shape.mean_height
    occ = gmsh.model.occ
    x0 = path.throat_length  # the body starts at x = 0; an inlet lead lies at x < 0
    boxes = []
    for k in range(path.count):
        xs = x0 + k * (path.chamber_length + path.throat_length)
        if path.one_sided:
            y0 = -0.5 * w  # chambers grow toward +y (left looking downstream); the -y wall stays straight
        else:
            y0 = -0.5 * path.chamber_width
        box = occ.addBox(
            xs / MODEL_UNIT, y0 / MODEL_UNIT, -0.5 * h / MODEL_UNIT,
            path.chamber_length / MODEL_UNIT, path.chamber_width / MODEL_UNIT, h / MODEL_UNIT,
        )
        boxes.append((3, box))
    return boxes


def build_solid(design: Design) -> int:
    """Build the fluid solid and return its volume tag (model synchronized)."""
    line = centerline_of(design)
    shape = section_shape_of(design)
    occ = gmsh.model.occ
    pieces: list[tuple[int, int]] = []
    for i in range(len(line.segments)):
        pieces += _piece(line, shape, i)
    if isinstance(design.path, ChambersPath):
        pieces += _chamber_boxes(design, line)
    if len(pieces) > 1:
        fused, _ = occ.fuse(pieces[:1], pieces[1:])
        vols = [dt for dt in fused if dt[0] == 3]
    else:
        vols = pieces
    occ.synchronize()
    if len(vols) != 1:
        raise RuntimeError(f"the channel solid came out as {len(vols)} volumes, expected 1")
    return vols[0][1]
