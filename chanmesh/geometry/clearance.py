"""Where a centreline comes back close to itself: the wall-clearance and self-crossing test of
paths made of pieces, whose layout no per-family rule can foresee.

Two centreline points closer than ``min_distance`` count as *different runs* only if the path
between them leaves the ball of that radius around the first point and comes back: points on
one bend or one straight never do (a convex curve turning by at most 180 degrees moves steadily
away from its start), while neighbouring runs of a serpentine or two crossing pieces always do.
Sampled every ``width / 8``; the figures are exact to well under 1 % of the width.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from chanmesh.geometry.centerline import Centerline


@dataclass(frozen=True)
class CloseRuns:
    """The closest return of the path to itself: arc lengths, segment indices and distance (m)."""

    s1: float
    s2: float
    segment1: int
    segment2: int
    distance: float


def close_runs(line: Centerline, min_distance: float, spacing: float) -> CloseRuns | None:
    """The closest pair of points on different runs nearer than ``min_distance``, or None."""
    s = line.samples(spacing)
    p = line.points(s)[:, :2]
    pairs = cKDTree(p).query_pairs(min_distance, output_type="ndarray")
    if len(pairs) == 0:
        return None
    i, j = pairs.min(axis=1), pairs.max(axis=1)
    keep = s[j] - s[i] > min_distance  # closer along the path than across: same run
    i, j = i[keep], j[keep]
    d = np.linalg.norm(p[i] - p[j], axis=1)
    worst: CloseRuns | None = None
    for a, b, dist in sorted(zip(i, j, d), key=lambda t: t[2]):
        if worst is not None and dist >= worst.distance:
            break
        away = np.linalg.norm(p[a + 1 : b] - p[a], axis=1)
        if away.size and float(away.max()) > min_distance:
            seg = np.clip(np.searchsorted(line.breaks, s[[a, b]], side="right") - 1, 0, len(line.segments) - 1)
            worst = CloseRuns(float(s[a]), float(s[b]), int(seg[0]), int(seg[1]), float(dist))
    return worst
