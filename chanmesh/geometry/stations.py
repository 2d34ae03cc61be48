"""Stations on the centreline: where a cross-section is embedded in the mesh or read out.

A station is written as

* a fraction of the centreline length, ``0.5`` (a plain number in [0, 1]);
* an arc length from the inlet with its unit, ``'12.5mm'``;
* an angle, ``'90deg'``: swept about the centres of the path's curved pieces (arcs and
  spirals), summed from the inlet with left and right turns counted alike; for an arc the bend
  angle, for a spiral its polar angle theta (not its slightly larger change of heading);
* the same in whole turns, ``'turn=2.25'`` (paths with a spiral);
* an angle into the K-th curved piece, ``'bend=2:45deg'`` (arcs and spirals counted from 1).

``station_frame`` gives the exact point, tangent and section frame there, and the exact
cross-section outline (a chamber's wider section when the station lies in one).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np

from chanmesh.design.model import ChambersPath, Design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import Arc, Centerline, Spiral, centerline_of
from chanmesh.geometry.section import section_shape_of
from chanmesh.units import parse_length

# used with fullmatch (no "$", which would also match before a final newline)
_ANGLE = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*deg\s*", re.IGNORECASE)
_BEND = re.compile(r"\s*bend\s*=\s*(\d+)\s*:\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*deg\s*", re.IGNORECASE)
_TURN = re.compile(r"\s*turns?\s*=\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*", re.IGNORECASE)
ENDS_TOL = 1e-12  # relative slack at the two ends of the centreline
END_CLEARANCE = 1e-9  # m: a mesh section this close to the inlet or outlet would be that face
STRAIGHT_CURVATURE = 1e-9  # 1/m: below this the path counts as straight


def curved_pieces(line: Centerline) -> list[int]:
    """Indices of the curved segments (arcs and spirals) in path order: bend 1, bend 2, ..."""
    return [i for i, seg in enumerate(line.segments) if isinstance(seg, (Arc, Spiral))]


def swept_angle(seg: Arc | Spiral) -> float:
    """Angle swept about the piece's own centre, rad (> 0): the bend angle of an arc, the polar
    angle theta of a spiral (slightly less than its change of heading)."""
    return abs(seg.sweep) if isinstance(seg, Arc) else seg.theta_end


def _local_arc_length(seg: Arc | Spiral, theta: float) -> float:
    return seg.radius * theta if isinstance(seg, Arc) else float(seg.arclength_at(np.array(theta)))


def _angle_station(design: Design, raw: Any, key: str, line: Centerline, angle: Any, turn: Any, bend: Any) -> float:
    """``'90deg'`` (swept over all bends from the inlet), ``'turn=2.25'`` (the same in whole
    turns; paths with a spiral) or ``'bend=K:45deg'`` (into the K-th curved piece)."""
    path = design.path
    curved = curved_pieces(line)
    if not curved:
        raise DesignError(key, raw, f"angle stations need a bend; this path ({path.kind}) is straight: "
                          "give a fraction or a length with unit")
    if turn and not any(isinstance(line.segments[i], Spiral) for i in curved):
        raise DesignError(key, raw, f"'turn=' stations apply to spirals only; this path ({path.kind}) has none")
    if bend:
        k = int(bend.group(1))
        if not 1 <= k <= len(curved):
            raise DesignError(key, raw, f"names bend {k}, but the path has bends 1 to {len(curved)} "
                              "(arcs and spirals counted from the inlet)")
        i = curved[k - 1]
        seg = line.segments[i]
        total = swept_angle(seg)  # type: ignore[arg-type]
        theta = math.radians(float(bend.group(2)))
        if not -1e-12 <= theta <= total * (1 + 1e-12):
            raise DesignError(key, raw, f"lies past the end of bend {k}: the angle must lie in [0, {math.degrees(total):.6g} deg]")
        theta = min(max(theta, 0.0), total)
        return float(line.breaks[i]) + _local_arc_length(seg, theta)  # type: ignore[arg-type]
    theta = math.radians(float(angle.group(1))) if angle else 2 * math.pi * float(turn.group(1))
    sweeps = [swept_angle(line.segments[i]) for i in curved]  # type: ignore[arg-type]
    total = float(sum(sweeps))
    shown = f"{math.degrees(total):.6g} deg" if angle else f"{total / (2 * math.pi):.6g} turns"
    if not -1e-12 <= theta <= total * (1 + 1e-12):
        raise DesignError(key, raw, f"lies past the end of the {path.kind}: the angle must lie in [0, {shown}] "
                          "(swept about the bends' centres from the inlet, left and right turns alike)")
    theta = min(max(theta, 0.0), total)
    for i, sweep in zip(curved, sweeps):
        if theta <= sweep * (1 + 1e-12) or i == curved[-1]:
            return float(line.breaks[i]) + _local_arc_length(line.segments[i], min(theta, sweep))  # type: ignore[arg-type]
        theta -= sweep
    raise AssertionError("unreachable")  # pragma: no cover


def _in_range(key: str, raw: Any, s: float, line: Centerline, what: str) -> float:
    L = line.length
    if not -ENDS_TOL * L <= s <= L * (1 + ENDS_TOL):
        raise DesignError(key, raw, f"lies off the centreline: {what} must lie in [0, {L * 1e3:.6g} mm] (the centreline length)")
    return min(max(s, 0.0), L)


def station_arc_length(design: Design, raw: Any, key: str = "--at", line: Centerline | None = None) -> float:
    """Arc length from the inlet (m) of one station spec; ``DesignError`` naming ``key`` otherwise."""
    line = line or centerline_of(design)
    path = design.path
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise DesignError(key, raw, "must be a fraction (0.5), a length with unit ('12.5mm'), an angle ('90deg', 'bend=2:45deg') or 'turn=2.25'")
    if isinstance(raw, (int, float)):
        if not (math.isfinite(raw) and 0.0 <= raw <= 1.0):
            raise DesignError(key, raw, "a plain number is a fraction of the centreline length and must lie in [0, 1]; "
                              "write a length with its unit ('12.5mm') for an arc length")
        return float(raw) * line.length
    text = raw.strip()
    try:
        as_number = float(text)
    except ValueError:
        as_number = None
    if as_number is not None:
        return station_arc_length(design, as_number, key, line)
    bend = _BEND.fullmatch(text)
    angle, turn = _ANGLE.fullmatch(text), _TURN.fullmatch(text)
    if angle or turn or bend:
        return _angle_station(design, raw, key, line, angle, turn, bend)
    try:
        s = parse_length(key, text)
    except DesignError:
        raise DesignError(key, raw, "is not a station: write a fraction (0.5), a length with unit ('12.5mm'), "
                          "an angle ('90deg' over all bends, 'bend=2:45deg' into one) or 'turn=2.25' (spirals)") from None
    return _in_range(key, raw, s, line, "an arc length")


def station_arc_lengths(design: Design, key: str = "mesh.sections") -> list[float]:
    """Arc lengths (m) of the design's ``mesh.sections``, in the order written.

    The structured hexahedral mesher places one node layer exactly at each of these.
    Two stations closer than 1 nm are refused: they would be one section twice.
    """
    line = centerline_of(design)
    out = [station_arc_length(design, raw, f"{key}[{i}]", line) for i, raw in enumerate(design.mesh.sections)]
    for i, a in enumerate(out):
        for j in range(i):
            if abs(a - out[j]) < 1e-9:
                raise DesignError(f"{key}[{i}]", design.mesh.sections[i], f"is the same place as {key}[{j}]; give each station once")
    return out


def mesh_station_arc_lengths(design: Design) -> list[float]:
    """``station_arc_lengths`` of ``mesh.sections`` for a mesh: stations on the inlet or outlet
    face are refused (those faces are already groups of their own)."""
    line = centerline_of(design)
    out = station_arc_lengths(design)
    for i, s in enumerate(out):
        if s < END_CLEARANCE or s > line.length - END_CLEARANCE:
            raise DesignError(f"mesh.sections[{i}]", design.mesh.sections[i],
                              "lies on the inlet or outlet face, which is already its own group; "
                              "choose a station strictly inside (0, 1)")
    return out


@dataclass(frozen=True)
class Outline:
    """Exact cross-section at a station in the section frame (u along n, v along z), metres.

    Vertical side walls at u0 < u1, a flat bottom, a straight top from ``top0`` (at u0) to
    ``top1`` (at u1).
    """

    u0: float
    u1: float
    bottom: float
    top0: float
    top1: float

    def top(self, u: np.ndarray | float) -> np.ndarray | float:
        return self.top0 + (self.top1 - self.top0) * (np.asarray(u) - self.u0) / (self.u1 - self.u0)

    @property
    def corners(self) -> np.ndarray:
        """(4, 2) corners (u, z), counter-clockwise from (u0, bottom)."""
        return np.array([[self.u0, self.bottom], [self.u1, self.bottom], [self.u1, self.top1], [self.u0, self.top0]])

    @property
    def area(self) -> float:
        return (self.u1 - self.u0) * (0.5 * (self.top0 + self.top1) - self.bottom)

    @property
    def centroid(self) -> tuple[float, float]:
        """Trapezoid with parallel vertical sides a, b (handbook formula, as ``SectionShape.centroid``)."""
        a, b, w = self.top0 - self.bottom, self.top1 - self.bottom, self.u1 - self.u0
        return self.u0 + w * (a + 2 * b) / (3 * (a + b)), self.bottom + (a * a + a * b + b * b) / (3 * (a + b))


def outline_at(design: Design, s: float) -> Outline:
    """The exact cross-section at arc length ``s``: the channel's, or a chamber's when inside one."""
    shape = section_shape_of(design)
    w2 = 0.5 * shape.width
    out = Outline(-w2, w2, shape.bottom, shape.bottom + shape.h_inner, shape.bottom + shape.h_outer)
    path = design.path
    if isinstance(path, ChambersPath):
        x = s - path.inlet_length - path.throat_length  # from the start of the first chamber
        period = path.chamber_length + path.throat_length
        k = math.floor(x / period) if x >= 0 else -1
        if 0 <= k < path.count and x - k * period < path.chamber_length:
            # chamber boxes in y (solids._chamber_boxes); u = -y because n = t x z = -y for t = +x
            y0 = -w2 if path.one_sided else -0.5 * path.chamber_width
            top = out.top0
            out = Outline(-(y0 + path.chamber_width), -y0, out.bottom, top, top)
    return out


@dataclass(frozen=True)
class StationFrame:
    """The centreline frame at one station, SI units.

    ``normal`` is n = t x z (right-hand side looking downstream, u > 0); ``outward`` points away
    from the centre of curvature (``normal`` for a left turn, ``-normal`` for a right turn,
    None on a straight). ``u_minus_side`` names the wall at u = -w/2.
    """

    label: str
    s: float
    fraction: float
    point: np.ndarray
    tangent: np.ndarray
    normal: np.ndarray
    outward: np.ndarray | None
    curvature: float  # signed, 1/m; > 0 turning left
    segment: str
    u_minus_side: str
    outline: Outline

    @property
    def curvature_radius(self) -> float:
        return math.inf if abs(self.curvature) < STRAIGHT_CURVATURE else 1.0 / abs(self.curvature)

    def to_dict(self) -> dict[str, Any]:
        return {
            "label": self.label,
            "s_m": self.s,
            "fraction": self.fraction,
            "segment": self.segment,
            "point_m": self.point.tolist(),
            "tangent": self.tangent.tolist(),
            "normal_n": self.normal.tolist(),
            "outward_normal": None if self.outward is None else self.outward.tolist(),
            "z": [0.0, 0.0, 1.0],
            "curvature_1_m": self.curvature,
            "curvature_radius_m": None if math.isinf(self.curvature_radius) else self.curvature_radius,
            "u_minus_half_width_is": self.u_minus_side,
            "section_area_m2": self.outline.area,
        }


def station_frame(design: Design, raw: Any, key: str = "--at", line: Centerline | None = None) -> StationFrame:
    """Frame and outline of the station written ``raw`` (see module docstring)."""
    line = line or centerline_of(design)
    s = station_arc_length(design, raw, key, line)
    arr = np.array([s])
    t = line.tangents(arr)[0]
    n = line.normals(arr)[0]
    kappa = float(line.curvature(arr)[0])
    idx = int(np.clip(np.searchsorted(line.breaks, s, side="right") - 1, 0, len(line.segments) - 1))
    if abs(kappa) < STRAIGHT_CURVATURE:
        outward, side = None, "left wall looking downstream (straight: no inner or outer wall)"
    elif kappa > 0:
        outward, side = n, "inner wall (nearer the centre of curvature; the path turns left here)"
    else:
        outward, side = -n, "outer wall (farther from the centre of curvature; the path turns right here)"
    label = str(raw) if not isinstance(raw, float) else f"{raw:g}"
    return StationFrame(label, s, s / line.length, line.points(arr)[0], t, n, outward, kappa,
                        line.kinds[idx], side, outline_at(design, s))
