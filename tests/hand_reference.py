"""Hand-worked centrelines, volumes and plan extents of every family, from the design numbers.

Shares no code with chanmesh: it reads the plain numbers of a design table (the dicts the
tests write as TOML, lengths in the design's unit) and works the geometry out by hand, so a
bug in chanmesh's centreline, reference values or meshers cannot hide in it. Layouts are the
ones the README states for each family (arc from (R, 0) heading +y counter-clockwise; spiral
r = r0 + pitch theta / 2 pi outward, counter-clockwise; serpentine from the origin heading +x,
U-turn left first, climbing 2 R per U-turn; chambers along +x from the origin).

Sources:
* straight and circular pieces: length = straight length, R |angle| (elementary geometry).
* Archimedean spiral r = r0 + c theta, c = pitch / 2 pi: ds = sqrt(r^2 + (dr/dtheta)^2) dtheta
  (arc length in polar coordinates), and with r = c phi the standard integral
  int sqrt(1 + phi^2) dphi = (phi sqrt(1 + phi^2) + asinh(phi)) / 2 (Abramowitz & Stegun 1964,
  and any table of integrals; checked in tests/test_hand_references.py by scipy's quad).
* tangent of a polar curve: d/dtheta (r cos theta, r sin theta) = (r' cos - r sin, r' sin + r cos).
* volume of a section of area A swept along a planar curve: A times the length of the path of
  the section's centroid (Pappus's centroid theorem in the general form, Goodman & Goodman
  1969); the centroid at offset u_c toward n = t x z traces L + u_c Phi, Phi the total
  counter-clockwise turning (offset-curve length).
* trapezoid with parallel sides a at u = -w/2 and b at u = +w/2: area w (a + b) / 2, centroid
  u_c = w (b - a) / (6 (a + b)) (centroid of a trapezoid, any engineering handbook).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

UNIT = {"um": 1e-6, "mm": 1e-3, "m": 1.0}


@dataclass(frozen=True)
class HandLine:
    """A centreline worked by hand, SI: length, end points, headings (rad from +x), turning."""

    length: float
    start: tuple[float, float]
    end: tuple[float, float]
    start_heading: float
    end_heading: float
    turning: float  # total counter-clockwise heading change, rad


def _lead_out(point: tuple[float, float], heading: float, length: float) -> tuple[float, float]:
    return point[0] + length * math.cos(heading), point[1] + length * math.sin(heading)


def spiral_length(r0: float, pitch: float, turns: float) -> float:
    """Closed-form Archimedean arc length from theta = 0 to 2 pi turns (see module docstring)."""
    c = pitch / (2 * math.pi)
    g = lambda phi: 0.5 * c * (phi * math.sqrt(1 + phi * phi) + math.asinh(phi))  # noqa: E731
    return g(r0 / c + 2 * math.pi * turns) - g(r0 / c)


def centreline(path: dict, unit: str = "um") -> HandLine:
    """The hand-worked centreline of a [path] table (numbers in ``unit``)."""
    k = UNIT[unit]
    li, lo = path.get("inlet_length", 0) * k, path.get("outlet_length", 0) * k
    kind = path["kind"]
    if kind == "arc":
        R, a = path["radius"] * k, math.radians(path["angle"])
        h0, h1 = math.pi / 2, math.pi / 2 + a
        p1 = (R * math.cos(a), R * math.sin(a))
        return HandLine(li + R * a + lo, (R, -li), _lead_out(p1, h1, lo), h0, h1, a)
    if kind == "spiral":
        r0, pitch, turns = path["inner_radius"] * k, path["pitch"] * k, path["turns"]
        c = pitch / (2 * math.pi)
        te = 2 * math.pi * turns
        r1 = r0 + c * te
        h0 = math.atan2(r0, c)  # tangent at theta = 0 is (c, r0)
        h1 = te + math.atan2(r1, c)  # the tangent (c, r) turned by theta
        start = _lead_out((r0, 0.0), h0 + math.pi, li)
        end = _lead_out((r1 * math.cos(te), r1 * math.sin(te)), h1, lo)
        return HandLine(li + spiral_length(r0, pitch, turns) + lo, start, end, h0, h1, h1 - h0)
    if kind == "serpentine":
        R, S, P = path["radius"] * k, path["straight"] * k, int(path["periods"])
        # 2P + 1 straights of S and 2P half circles of R; 2P U-turns climb 2R each; the
        # alternating U-turns cancel, so the outlet heads +x like the inlet
        L = (2 * P + 1) * S + 2 * P * math.pi * R
        return HandLine(li + L + lo, (-li, 0.0), (S + lo, 4 * R * P), 0.0, 0.0, 0.0)
    if kind == "chambers":
        n = int(path["count"])
        L = (n + 1) * path["throat_length"] * k + n * path["chamber_length"] * k
        return HandLine(li + L + lo, (-li, 0.0), (L + lo, 0.0), 0.0, 0.0, 0.0)
    raise ValueError(kind)


def section_numbers(section: dict, unit: str = "um") -> tuple[float, float, float, float, float]:
    """(width, h_inner, h_outer, area, centroid offset u_c), SI."""
    k = UNIT[unit]
    w = section["width"] * k
    if section.get("shape", "rectangle") == "rectangle":
        a = b = section["height"] * k
    else:
        a, b = section["height_inner"] * k, section["height_outer"] * k
    return w, a, b, w * (a + b) / 2, w * (b - a) / (6 * (a + b))


def volume(section: dict, path: dict, unit: str = "um") -> float:
    """Channel volume, m^3: Pappus (Goodman & Goodman 1969) for swept sections; chambers as
    boxes (plan area times height)."""
    w, a, b, area, uc = section_numbers(section, unit)
    line = centreline(path, unit)
    if path["kind"] == "chambers":
        return plan_area(section, path, unit) * (a + b) / 2
    return area * (line.length + uc * line.turning)


def plan_area(section: dict, path: dict, unit: str = "um") -> float:
    """Footprint seen from above, m^2: w L for a swept width (the offset terms cancel across a
    centred width), plus count x chamber_length x (chamber_width - w) for chambers."""
    k = UNIT[unit]
    w = section_numbers(section, unit)[0]
    L = centreline(path, unit).length
    if path["kind"] == "chambers":
        return w * L + path["count"] * path["chamber_length"] * k * (path["chamber_width"] * k - w)
    return w * L


def chambers_wall_area(section: dict, path: dict, unit: str = "um") -> float:
    """Top and bottom (twice the plan area) plus the side walls: 2 L + 2 count (W - w) long."""
    k = UNIT[unit]
    w, a, _, _, _ = section_numbers(section, unit)
    L = centreline(path, unit).length
    side = 2 * L + 2 * path["count"] * (path["chamber_width"] * k - w)
    return 2 * plan_area(section, path, unit) + a * side


def plan_box(section: dict, path: dict, unit: str = "um") -> tuple[float, float, float, float]:
    """(x_min, x_max, y_min, y_max) of the footprint, m, for serpentines and chambers."""
    k = UNIT[unit]
    w = section_numbers(section, unit)[0]
    li, lo = path.get("inlet_length", 0) * k, path.get("outlet_length", 0) * k
    line = centreline(path, unit)
    if path["kind"] == "serpentine":
        R, S, P = path["radius"] * k, path["straight"] * k, int(path["periods"])
        # left U-turns about (S, (4j + 1) R) reach x = S + R + w/2; right ones about
        # (0, (4j + 3) R) reach x = -(R + w/2)
        return (min(-li, -(R + w / 2)), max(S + lo, S + R + w / 2), -w / 2, 4 * R * P + w / 2)
    if path["kind"] == "chambers":
        W = path["chamber_width"] * k
        y0, y1 = (-w / 2, -w / 2 + W) if path.get("one_sided") else (-W / 2, W / 2)
        return (-li, line.end[0], y0, y1)
    raise ValueError(path["kind"])
