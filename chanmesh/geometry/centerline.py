"""Centrelines as chains of exact segments (line, circular arc, Archimedean spiral).

Every centreline lies in the z = 0 plane and starts, at arc length s = 0, at the inlet. Each
segment evaluates points, unit tangents and signed curvature in closed form, so stations,
swept meshes and analytic checks share one exact description.

Frame convention (used everywhere in chanmesh): tangent ``t``; in-plane normal
``n = t x z`` (the right-hand side looking downstream); ``z`` up. A section point at local
coordinates ``(u, z)`` sits at ``p(s) + u n(s) + z z``. For arcs and spirals, which turn
counter-clockwise, ``n`` points away from the centre of curvature, so ``u = -w/2`` is the
inner wall and ``u = +w/2`` the outer wall.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Protocol

import numpy as np

from chanmesh.design.model import (
    ArcPath,
    ArcPiece,
    ChambersPath,
    Design,
    LinePiece,
    Path,
    Piece,
    SegmentsPath,
    SerpentinePath,
    SpiralPath,
    SpiralPiece,
    StraightPath,
)


class Segment(Protocol):
    length: float

    def points(self, s: np.ndarray) -> np.ndarray: ...  # (n, 2) m
    def tangents(self, s: np.ndarray) -> np.ndarray: ...  # (n, 2) unit
    def curvature(self, s: np.ndarray) -> np.ndarray: ...  # (n,) 1/m, > 0 turning left
    @property
    def turning(self) -> float: ...  # total signed change of heading, rad


@dataclass(frozen=True)
class Line:
    """Straight segment from ``start`` along ``heading`` (rad from +x) for ``length`` metres."""

    start: tuple[float, float]
    heading: float
    length: float

    def _dir(self) -> np.ndarray:
        return np.array([math.cos(self.heading), math.sin(self.heading)])

    def points(self, s: np.ndarray) -> np.ndarray:
        return np.asarray(self.start) + np.outer(s, self._dir())

    def tangents(self, s: np.ndarray) -> np.ndarray:
        return np.tile(self._dir(), (len(s), 1))

    def curvature(self, s: np.ndarray) -> np.ndarray:
        return np.zeros(len(s))

    @property
    def turning(self) -> float:
        return 0.0

    @property
    def end(self) -> tuple[tuple[float, float], float]:
        p = self.points(np.array([self.length]))[0]
        return (float(p[0]), float(p[1])), self.heading


@dataclass(frozen=True)
class Arc:
    """Circular arc about ``center``; position angle from ``angle0``, ``sweep`` rad (+ = CCW)."""

    center: tuple[float, float]
    radius: float
    angle0: float
    sweep: float

    @property
    def length(self) -> float:
        return self.radius * abs(self.sweep)

    def _angle(self, s: np.ndarray) -> np.ndarray:
        return self.angle0 + np.sign(self.sweep) * np.asarray(s) / self.radius

    def points(self, s: np.ndarray) -> np.ndarray:
        a = self._angle(s)
        return np.asarray(self.center) + self.radius * np.column_stack([np.cos(a), np.sin(a)])

    def tangents(self, s: np.ndarray) -> np.ndarray:
        a = self._angle(s)
        sg = np.sign(self.sweep)
        return sg * np.column_stack([-np.sin(a), np.cos(a)])

    def curvature(self, s: np.ndarray) -> np.ndarray:
        return np.full(len(s), np.sign(self.sweep) / self.radius)

    @property
    def turning(self) -> float:
        return self.sweep


@dataclass(frozen=True)
class Spiral:
    """Archimedean spiral r = r0 + c theta, theta in [0, theta_end], about ``center``.

    The point at theta lies at polar angle ``angle0 + sense * theta`` about the centre;
    ``sense`` = +1 winds counter-clockwise (turning left), -1 clockwise (turning right). The
    defaults put the centre at the origin, starting on +x, counter-clockwise (the spiral family).

    Arc length from theta = 0 in closed form with phi = theta + r0 / c (any handbook of
    plane curves): s = c/2 [phi sqrt(1 + phi^2) + asinh(phi)] evaluated from phi0 to phi.
    """

    r0: float
    c: float  # pitch / (2 pi)
    theta_end: float
    center: tuple[float, float] = (0.0, 0.0)
    angle0: float = 0.0
    sense: float = 1.0

    def _g(self, phi: np.ndarray) -> np.ndarray:
        return 0.5 * self.c * (phi * np.sqrt(1.0 + phi * phi) + np.arcsinh(phi))

    @property
    def _phi0(self) -> float:
        return self.r0 / self.c

    @property
    def length(self) -> float:
        return float(self._g(np.array(self._phi0 + self.theta_end)) - self._g(np.array(self._phi0)))

    def theta_at(self, s: np.ndarray) -> np.ndarray:
        """Invert s(theta) by Newton's method (ds/dtheta = c sqrt(1 + phi^2) > 0)."""
        s = np.asarray(s, dtype=float)
        g0 = self._g(np.array(self._phi0))
        phi = np.full_like(s, self._phi0) + s / max(self.r0, self.c)
        for _ in range(60):
            f = self._g(phi) - g0 - s
            step = f / (self.c * np.sqrt(1.0 + phi * phi))
            phi = phi - step
            if np.all(np.abs(step) < 1e-15 * (1.0 + np.abs(phi))):
                break
        return phi - self._phi0

    def arclength_at(self, theta: np.ndarray) -> np.ndarray:
        theta = np.asarray(theta, dtype=float)
        return self._g(self._phi0 + theta) - self._g(np.array(self._phi0))

    def radius_at(self, s: np.ndarray) -> np.ndarray:
        """Distance from the spiral's centre, r0 + c theta (m)."""
        return self.r0 + self.c * self.theta_at(s)

    def points(self, s: np.ndarray) -> np.ndarray:
        th = self.theta_at(s)
        r = self.r0 + self.c * th
        a = self.angle0 + self.sense * th
        return np.asarray(self.center) + np.column_stack([r * np.cos(a), r * np.sin(a)])

    def tangents(self, s: np.ndarray) -> np.ndarray:
        th = self.theta_at(s)
        r = self.r0 + self.c * th
        a = self.angle0 + self.sense * th
        dx = self.c * np.cos(a) - self.sense * r * np.sin(a)
        dy = self.c * np.sin(a) + self.sense * r * np.cos(a)
        norm = np.hypot(dx, dy)
        return np.column_stack([dx / norm, dy / norm])

    def curvature(self, s: np.ndarray) -> np.ndarray:
        """kappa = sense (r^2 + 2c^2) / (r^2 + c^2)^(3/2) for r = r0 + c theta."""
        r = self.r0 + self.c * self.theta_at(s)
        return self.sense * (r * r + 2 * self.c**2) / (r * r + self.c**2) ** 1.5

    @property
    def turning(self) -> float:
        """Heading change: theta plus the change of the angle between radius and tangent."""
        psi = lambda th: math.atan2(self.r0 + self.c * th, self.c)  # noqa: E731
        return self.sense * (self.theta_end + psi(self.theta_end) - psi(0.0))

    @property
    def swept(self) -> float:
        """Polar angle swept about the centre, rad (> 0)."""
        return self.theta_end


@dataclass(frozen=True)
class Centerline:
    """A chain of segments joined with continuous position and tangent."""

    segments: tuple[Segment, ...]
    kinds: tuple[str, ...]  # role of each segment: "lead", "bend", "straight", "spiral", ...

    @property
    def breaks(self) -> np.ndarray:
        """Arc length at the start of each segment and at the end: shape (len(segments) + 1,)."""
        return np.concatenate([[0.0], np.cumsum([seg.length for seg in self.segments])])

    @property
    def length(self) -> float:
        return float(self.breaks[-1])

    @property
    def turning(self) -> float:
        return float(sum(seg.turning for seg in self.segments))

    def samples(self, spacing: float) -> np.ndarray:
        """Arc lengths every ``spacing`` or closer, keeping every segment join (curved segments
        get at least 16 intervals): for outlines, size grids and clearance tests."""
        out = [np.array([0.0])]
        for seg, s0 in zip(self.segments, self.breaks[:-1]):
            k = max(1, int(math.ceil(seg.length / spacing)))
            if isinstance(seg, (Arc, Spiral)):
                k = max(k, 16)
            out.append(s0 + np.linspace(0.0, seg.length, k + 1)[1:])
        return np.concatenate(out)

    def _locate(self, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        s = np.clip(np.atleast_1d(np.asarray(s, dtype=float)), 0.0, self.length)
        b = self.breaks
        idx = np.clip(np.searchsorted(b, s, side="right") - 1, 0, len(self.segments) - 1)
        return idx, s - b[idx]

    def _eval(self, s: np.ndarray, what: str) -> np.ndarray:
        idx, local = self._locate(s)
        out = np.zeros((len(local), 2) if what != "curvature" else len(local))
        for i, seg in enumerate(self.segments):
            m = idx == i
            if np.any(m):
                out[m] = getattr(seg, what)(local[m])
        return out

    def points(self, s: np.ndarray) -> np.ndarray:
        """Centreline points, (n, 3) float, m (z = 0)."""
        p = self._eval(s, "points")
        return np.column_stack([p, np.zeros(len(p))])

    def tangents(self, s: np.ndarray) -> np.ndarray:
        """Unit tangents, (n, 3) float."""
        t = self._eval(s, "tangents")
        return np.column_stack([t, np.zeros(len(t))])

    def normals(self, s: np.ndarray) -> np.ndarray:
        """In-plane normals n = t x z (right-hand side looking downstream), (n, 3) float."""
        t = self._eval(s, "tangents")
        return np.column_stack([t[:, 1], -t[:, 0], np.zeros(len(t))])

    def curvature(self, s: np.ndarray) -> np.ndarray:
        """Signed curvature, (n,) 1/m; positive where the path turns left (counter-clockwise)."""
        return self._eval(s, "curvature")


PIECE_ROLES = {"line": "straight", "arc": "bend", "spiral": "spiral"}
"""Role of each piece kind in ``Centerline.kinds`` (leads are ``"lead"``)."""


def _cos_sin(angle: float) -> tuple[float, float]:
    """cos and sin, exact at whole multiples of 90 degrees (so axis-aligned layouts stay exact)."""
    q = angle / (0.5 * math.pi)
    if abs(q - round(q)) < 1e-12:
        return ((1.0, 0.0), (0.0, 1.0), (-1.0, 0.0), (0.0, -1.0))[int(round(q)) % 4]
    return math.cos(angle), math.sin(angle)


def segment_of(piece: Piece, start: tuple[float, float], heading: float) -> Segment:
    """The exact segment of one piece laid from ``start`` (m) along ``heading`` (rad from +x)."""
    x, y = start
    if isinstance(piece, LinePiece):
        return Line(start, heading, piece.length)
    if isinstance(piece, ArcPiece):
        side = 1.0 if piece.angle > 0 else -1.0  # the centre lies to the left for a left turn
        cos_h, sin_h = _cos_sin(heading)
        cx = x - side * piece.radius * sin_h
        cy = y + side * piece.radius * cos_h
        return Arc((cx, cy), piece.radius, math.atan2(y - cy, x - cx), math.radians(piece.angle))
    if isinstance(piece, SpiralPiece):
        sense = 1.0 if piece.turns > 0 else -1.0
        c = piece.pitch / (2 * math.pi)
        # the tangent at theta = 0 leans atan2(r0, c) from the outward radius, toward the turn
        angle0 = heading - sense * math.atan2(piece.radius, c)
        centre = (x - piece.radius * math.cos(angle0), y - piece.radius * math.sin(angle0))
        return Spiral(piece.radius, c, 2 * math.pi * abs(piece.turns), centre, angle0, sense)
    raise TypeError(f"unknown piece {piece!r}")


def _end(seg: Segment) -> tuple[tuple[float, float], float]:
    p = seg.points(np.array([seg.length]))[0]
    t = seg.tangents(np.array([seg.length]))[0]
    return (float(p[0]), float(p[1])), math.atan2(t[1], t[0])


def lay_out(pieces: tuple[Piece, ...] | list[Piece], start: tuple[float, float] = (0.0, 0.0), heading: float = 0.0,
            inlet_length: float = 0.0, outlet_length: float = 0.0) -> Centerline:
    """The one centreline code path: pieces laid end to end with a continuous tangent from
    ``start`` along ``heading``, with optional straight leads before (ending at ``start``) and
    after. Headings of lines and arcs advance by the exact piece angle, not a re-measured one."""
    segs: list[Segment] = []
    roles: list[str] = []
    if inlet_length > 0:
        d = (math.cos(heading), math.sin(heading))
        segs.append(Line((start[0] - d[0] * inlet_length, start[1] - d[1] * inlet_length), heading, inlet_length))
        roles.append("lead")
    p, h = start, heading
    for piece in pieces:
        seg = segment_of(piece, p, h)
        segs.append(seg)
        roles.append(PIECE_ROLES[piece.kind])
        p, h_end = _end(seg)
        h = h + seg.turning if not isinstance(seg, Spiral) else h_end
    if outlet_length > 0:
        segs.append(Line(p, h, outlet_length))
        roles.append("lead")
    return Centerline(tuple(segs), tuple(roles))


def pieces_of(path: Path) -> tuple[tuple[float, float], float, tuple[Piece, ...]]:
    """How each family maps to pieces: (start point m, start heading rad, pieces)."""
    if isinstance(path, SegmentsPath):
        return (0.0, 0.0), 0.0, tuple(path.segments)
    if isinstance(path, ArcPath):
        # starts at (R, 0) heading +y, turns counter-clockwise about the origin
        return (path.radius, 0.0), 0.5 * math.pi, (ArcPiece(path.radius, path.angle),)
    if isinstance(path, SpiralPath):
        # starts at (r0, 0) on the +x axis, centre at the origin, counter-clockwise
        c = path.pitch / (2 * math.pi)
        return (path.inner_radius, 0.0), math.atan2(path.inner_radius, c), (SpiralPiece(path.inner_radius, path.pitch, path.turns),)
    if isinstance(path, SerpentinePath):
        # straight, U-turn left, straight, U-turn right, ..., straight; heading +x, climbing in +y
        out: list[Piece] = []
        for k in range(2 * path.periods):
            out += [LinePiece(path.straight), ArcPiece(path.radius, 180.0 if k % 2 == 0 else -180.0)]
        out.append(LinePiece(path.straight))
        return (0.0, 0.0), 0.0, tuple(out)
    if isinstance(path, ChambersPath):
        total = (path.count + 1) * path.throat_length + path.count * path.chamber_length
        return (0.0, 0.0), 0.0, (LinePiece(total),)
    if isinstance(path, StraightPath):
        return (0.0, 0.0), 0.0, (LinePiece(path.length),)
    raise TypeError(f"unknown path {path!r}")


def centerline_of(design: Design) -> Centerline:
    """The exact centreline of a design's path: its pieces (``pieces_of``) laid out by ``lay_out``."""
    path = design.path
    start, heading, pieces = pieces_of(path)
    return lay_out(pieces, start, heading, path.inlet_length, path.outlet_length)
