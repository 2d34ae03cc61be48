"""Centrelines as chains of exact segments (line, circular arc, Archimedean spiral).

Every centreline lies in the z = 0 plane and starts, at arc length s = 0, at the inlet. Each
segment evaluates points, unit tangents and signed curvature in closed form, so stations,
swept meshes and analytic checks share one exact description.

Frame convention (used everywhere in chanmesh): tangent ``t``; in-plane normal
``n = t x z`` (the right-hand side looking downstream); ``z`` up. A section point at local
coordinates ``(u, v)`` sits at ``p(s) + u n(s) + v z``. For arcs and spirals, which turn
counter-clockwise, ``n`` points away from the centre of curvature, so ``u = -w/2`` is the
inner wall and ``u = +w/2`` the outer wall.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Protocol

import numpy as np

from chanmesh.design.model import ArcPath, ChambersPath, Design, Path, SerpentinePath, SpiralPath


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
    """Archimedean spiral r = r0 + c theta about the origin, theta in [0, theta_end], CCW.

    Arc length from theta = 0 in closed form with phi = theta + r0 / c (any handbook of
    plane curves): s = c/2 [phi sqrt(1 + phi^2) + asinh(phi)] evaluated from phi0 to phi.
    """

    r0: float
    c: float  # pitch / (2 pi)
    theta_end: float

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

    def points(self, s: np.ndarray) -> np.ndarray:
        th = self.theta_at(s)
        r = self.r0 + self.c * th
        return np.column_stack([r * np.cos(th), r * np.sin(th)])

    def tangents(self, s: np.ndarray) -> np.ndarray:
        th = self.theta_at(s)
        r = self.r0 + self.c * th
        dx = self.c * np.cos(th) - r * np.sin(th)
        dy = self.c * np.sin(th) + r * np.cos(th)
        norm = np.hypot(dx, dy)
        return np.column_stack([dx / norm, dy / norm])

    def curvature(self, s: np.ndarray) -> np.ndarray:
        """kappa = (r^2 + 2c^2) / (r^2 + c^2)^(3/2) for r = r0 + c theta."""
        r = self.r0 + self.c * self.theta_at(s)
        return (r * r + 2 * self.c**2) / (r * r + self.c**2) ** 1.5

    @property
    def turning(self) -> float:
        """Heading change: theta plus the change of the angle between radius and tangent."""
        psi = lambda th: math.atan2(self.r0 + self.c * th, self.c)  # noqa: E731
        return self.theta_end + psi(self.theta_end) - psi(0.0)


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


def _chain(first: Segment, path: Path, body: list[Segment], kinds: list[str]) -> Centerline:
    """Add the optional straight leads before and after the body."""
    segs: list[Segment] = []
    roles: list[str] = []
    if path.inlet_length > 0:
        p0 = first.points(np.array([0.0]))[0]
        t0 = first.tangents(np.array([0.0]))[0]
        start = (float(p0[0] - t0[0] * path.inlet_length), float(p0[1] - t0[1] * path.inlet_length))
        segs.append(Line(start, math.atan2(t0[1], t0[0]), path.inlet_length))
        roles.append("lead")
    segs += body
    roles += kinds
    if path.outlet_length > 0:
        last = body[-1]
        p1 = last.points(np.array([last.length]))[0]
        t1 = last.tangents(np.array([last.length]))[0]
        segs.append(Line((float(p1[0]), float(p1[1])), math.atan2(t1[1], t1[0]), path.outlet_length))
        roles.append("lead")
    return Centerline(tuple(segs), tuple(roles))


def centerline_of(design: Design) -> Centerline:
    """The exact centreline of a design's path (see each path class for the layout)."""
    path = design.path
    if isinstance(path, ArcPath):
        # starts at (R, 0) heading +y, turns counter-clockwise about the origin
        arc = Arc((0.0, 0.0), path.radius, 0.0, math.radians(path.angle))
        return _chain(arc, path, [arc], ["bend"])
    if isinstance(path, SpiralPath):
        sp = Spiral(path.inner_radius, path.pitch / (2 * math.pi), 2 * math.pi * path.turns)
        return _chain(sp, path, [sp], ["spiral"])
    if isinstance(path, SerpentinePath):
        return _chain_serpentine(path)
    if isinstance(path, ChambersPath):
        total = (path.count + 1) * path.throat_length + path.count * path.chamber_length
        line = Line((0.0, 0.0), 0.0, total)
        return _chain(line, path, [line], ["straight"])
    raise TypeError(f"unknown path {path!r}")


def _chain_serpentine(path: SerpentinePath) -> Centerline:
    """Straight, U-turn left, straight, U-turn right, ... ending with a straight; starts at the
    origin heading +x, and climbs in +y by 2 R per U-turn."""
    R, L = path.radius, path.straight
    segs: list[Segment] = []
    kinds: list[str] = []
    x, y, heading = 0.0, 0.0, 0.0
    for k in range(2 * path.periods):
        segs.append(Line((x, y), heading, L))
        kinds.append("straight")
        x += L * math.cos(heading)
        left = k % 2 == 0
        # heading is 0 or pi; the centre of the U-turn lies one radius to the turning side
        side = 1.0 if left else -1.0
        nx, ny = -math.sin(heading) * side, math.cos(heading) * side
        cx, cy = x + R * nx, y + R * ny
        angle0 = math.atan2(y - cy, x - cx)
        segs.append(Arc((cx, cy), R, angle0, side * math.pi))
        kinds.append("bend")
        x, y = cx + R * nx, cy + R * ny
        heading = heading + math.pi if left else heading - math.pi
    segs.append(Line((x, y), heading, L))
    kinds.append("straight")
    return _chain(segs[0], path, segs, kinds)
