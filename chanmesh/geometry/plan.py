"""The channel's footprint seen from above: closed outline polygons in the z = 0 plane, metres.

Used for the plan-view drawings and mask outlines, and for wall distances in the chambers
family. The outline runs counter-clockwise; ``port_edges`` marks the inlet and outlet edges.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from chanmesh.design.model import ChambersPath, Design
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.section import section_shape_of


@dataclass(frozen=True)
class PlanOutline:
    points: np.ndarray  # (k, 2) m, closed implicitly (last connects to first), counter-clockwise
    port_edges: np.ndarray  # (k,) bool: edge i (points[i] -> points[i+1]) is the inlet or outlet

    @property
    def area(self) -> float:
        """Shoelace formula."""
        x, y = self.points[:, 0], self.points[:, 1]
        return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def centerline_samples(design: Design, spacing: float) -> np.ndarray:
    """Arc lengths along the centreline at about ``spacing``, keeping every segment join."""
    return centerline_of(design).samples(spacing)


def plan_outline(design: Design, spacing: float | None = None) -> PlanOutline:
    """Outline of the plan view; curved walls sampled every ``spacing`` (default w / 8)."""
    shape = section_shape_of(design)
    w = shape.width
    if isinstance(design.path, ChambersPath):
        return _chambers_outline(design)
    line = centerline_of(design)
    s = centerline_samples(design, spacing or w / 8)
    p = line.points(s)[:, :2]
    n = line.normals(s)[:, :2]
    right = p + 0.5 * w * n  # u = +w/2
    left = p - 0.5 * w * n  # u = -w/2
    pts = np.concatenate([right, left[::-1]])
    ports = np.zeros(len(pts), bool)
    ports[len(right) - 1] = True  # right end -> left end: the outlet edge
    ports[-1] = True  # closing edge left start -> right start: the inlet edge
    out = PlanOutline(pts, ports)
    if out.area < 0:  # make it counter-clockwise
        out = PlanOutline(pts[::-1].copy(), np.roll(ports[::-1], -1))
    return out


def _chambers_outline(design: Design) -> PlanOutline:
    path = design.path
    assert isinstance(path, ChambersPath)
    w = design.section.width
    L = centerline_of(design).length
    x_in = -path.inlet_length
    x_out = x_in + L
    lo_band, hi_band = -0.5 * w, 0.5 * w
    if path.one_sided:
        lo_ch, hi_ch = -0.5 * w, -0.5 * w + path.chamber_width
    else:
        lo_ch, hi_ch = -0.5 * path.chamber_width, 0.5 * path.chamber_width
    starts = [path.throat_length + k * (path.chamber_length + path.throat_length) for k in range(path.count)]
    bottom = [(x_in, lo_band)]
    top = [(x_out, hi_band)]
    for x0 in starts:
        x1 = x0 + path.chamber_length
        if lo_ch < lo_band:
            bottom += [(x0, lo_band), (x0, lo_ch), (x1, lo_ch), (x1, lo_band)]
    bottom.append((x_out, lo_band))
    for x0 in reversed(starts):
        x1 = x0 + path.chamber_length
        if hi_ch > hi_band:
            top += [(x1, hi_band), (x1, hi_ch), (x0, hi_ch), (x0, hi_band)]
    top.append((x_in, hi_band))
    pts = np.array(bottom + top, dtype=float)
    ports = np.zeros(len(pts), bool)
    ports[len(bottom) - 1] = True  # (x_out, lo) -> (x_out, hi): outlet
    ports[-1] = True  # (x_in, hi) -> (x_in, lo): inlet
    return PlanOutline(pts, ports)


def wall_samples(outline: PlanOutline, spacing: float) -> np.ndarray:
    """Points every ``spacing`` along the side walls (port edges left out), (m, 2)."""
    p = outline.points
    q = np.roll(p, -1, axis=0)
    out = []
    for a, b, port in zip(p, q, outline.port_edges):
        if port:
            continue
        k = max(1, int(math.ceil(np.linalg.norm(b - a) / spacing)))
        t = np.linspace(0.0, 1.0, k + 1)[:, None]
        out.append(a + t * (b - a))
    return np.concatenate(out)
