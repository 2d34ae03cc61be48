"""Where a channel comes back close to itself: the wall-clearance and self-crossing test of
every path (leads and pieces of any family), whose layout no per-family rule can foresee.

The plan outline is the union of the section lines (wall to wall across the channel, seen from
above) along the centreline. Two sections count as *different runs* only if the centreline
between them leaves the ball of radius width + gap around the first and comes back: sections of
one bend or one straight never do (however tight the bend, its sections stay within one width
of each other until they have moved on), while neighbouring runs of a serpentine, a lead that
runs into the channel or two crossing pieces always do. Sections of different runs must stay at
least ``gap`` apart (0 where they cross). Sampled every ``width / 8``; the distances are exact
to well under 1 % of the width.

Pure numpy (no scipy): the design checks run this for every command that reads a design, and
``chanmesh numbers`` must start in well under a second (issue 14).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.geometry.centerline import Centerline


@dataclass(frozen=True)
class WallContact:
    """Two sections of different runs whose walls come closer than allowed: arc lengths (m),
    segment indices and the plan distance between the two section lines (m; 0 if they cross)."""

    s1: float
    s2: float
    segment1: int
    segment2: int
    distance: float


MAX_SAMPLES = 400_000
"""Most centreline samples the wall test takes (the design checks keep paths within 50,000
widths, which is this at width / 8)."""


_HALF_STENCIL = np.array([(0, 0), (1, -1), (1, 0), (1, 1), (0, 1)])
"""Grid cells paired with a cell (itself and four of its eight neighbours: each pair of cells once)."""


def close_pairs(points: np.ndarray, radius: float) -> np.ndarray:
    """Every pair of ``points`` ((n, 2) float, m) at most ``radius`` (m) apart: (k, 2) int,
    i < j in each row, rows sorted. Points are binned on a square grid of side ``radius``, so
    a pair lies in one cell or two neighbouring ones; the work is linear in the points when
    each cell holds a few (the wall samples of a channel do)."""
    pts = np.asarray(points, dtype=float)
    n = len(pts)
    if n < 2 or not radius > 0:
        return np.zeros((0, 2), dtype=np.intp)
    cell = np.floor((pts - pts.min(axis=0)) / radius).astype(np.int64)
    rows = int(cell[:, 1].max()) + 3  # one spare row each side: neighbour keys never wrap
    key = cell[:, 0] * rows + cell[:, 1] + 1
    order = np.argsort(key, kind="stable")
    sorted_key = key[order]  # work in this order: sorted look-ups run through memory in order
    cells, first, size = np.unique(sorted_key, return_index=True, return_counts=True)
    found = []
    for dx, dy in _HALF_STENCIL:
        target = sorted_key + (dx * rows + dy)
        at = np.minimum(np.searchsorted(cells, target), len(cells) - 1)
        count = np.where(cells[at] == target, size[at], 0)
        i = np.repeat(np.arange(n), count)
        offset = np.arange(int(count.sum())) - np.repeat(np.cumsum(count) - count, count)
        j = np.repeat(first[at], count) + offset
        if dx == 0 and dy == 0:
            keep = i < j
            i, j = i[keep], j[keep]
        i, j = order[i], order[j]
        found.append(np.stack([np.minimum(i, j), np.maximum(i, j)], axis=1))
    pairs = np.concatenate(found)
    d2 = np.sum((pts[pairs[:, 0]] - pts[pairs[:, 1]]) ** 2, axis=1)
    pairs = pairs[d2 <= radius * radius]
    return pairs[np.lexsort((pairs[:, 1], pairs[:, 0]))]


def _cross(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _point_to_segment(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    ab = b - a
    t = np.clip(np.sum((p - a) * ab, axis=-1) / np.maximum(np.sum(ab * ab, axis=-1), 1e-300), 0.0, 1.0)
    return np.linalg.norm(p - (a + t[..., None] * ab), axis=-1)


def segment_distances(a1: np.ndarray, b1: np.ndarray, a2: np.ndarray, b2: np.ndarray) -> np.ndarray:
    """Plan distance between segments a1-b1 and a2-b2, element by element (0 where they cross)."""
    d1, d2 = b1 - a1, b2 - a2
    crossing = (_cross(d1, a2 - a1) * _cross(d1, b2 - a1) < 0) & (_cross(d2, a1 - a2) * _cross(d2, b1 - a2) < 0)
    d = np.minimum(np.minimum(_point_to_segment(a1, a2, b2), _point_to_segment(b1, a2, b2)),
                   np.minimum(_point_to_segment(a2, a1, b1), _point_to_segment(b2, a1, b1)))
    return np.where(crossing, 0.0, d)


def _edge_distances(walls: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distance between the wall edges at wall points ``a`` and ``b`` (the edges before and
    after each point on its own wall; 0 where they cross), element by element. ``walls`` is
    (2, n, 2): the u = -w/2 and u = +w/2 walls; a point index is side * n + k."""
    n = walls.shape[1]
    if len(a) == 0:
        return np.zeros(0)

    def edges(q: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        side, k = np.divmod(q, n)
        lo, hi = np.maximum(k - 1, 0), np.minimum(k + 1, n - 1)
        start = np.stack([walls[side, lo], walls[side, k]], axis=1)  # (m, 2, 2)
        end = np.stack([walls[side, k], walls[side, hi]], axis=1)
        return start, end

    a1, b1 = edges(a)
    a2, b2 = edges(b)
    d = segment_distances(a1[:, :, None], b1[:, :, None], a2[:, None, :], b2[:, None, :])  # (m, 2, 2)
    return d.reshape(len(a), -1).min(axis=1)


def wall_contact(line: Centerline, width: float, gap: float) -> WallContact | None:
    """The closest place where the walls of two different runs come within ``gap`` of each
    other (0 where they cross); None if there is none: the plan outline is a simple polygon with
    clearance ``gap``. Walls are polylines through points every width / 8 of centreline (leads,
    ports and every piece of the path included)."""
    spacing = max(width / 8, line.length / MAX_SAMPLES)
    s = line.samples(spacing)
    n_s = len(s)
    p = line.points(s)[:, :2]
    normal = line.normals(s)[:, :2]
    walls = np.stack([p - 0.5 * width * normal, p + 0.5 * width * normal])  # (2, n, 2)
    # wall points within gap of another wall edge lie within gap + one edge of its points
    edge = float(np.max(np.linalg.norm(np.diff(walls, axis=1), axis=2)))
    pairs = close_pairs(walls.reshape(-1, 2), gap + edge)
    if len(pairs) == 0:
        return None
    a, b = pairs[:, 0], pairs[:, 1]
    i, j = a % n_s, b % n_s
    swap = i > j
    a, b = np.where(swap, b, a), np.where(swap, a, b)
    i, j = np.minimum(i, j), np.maximum(i, j)
    reach = width + gap + spacing
    keep = s[j] - s[i] > reach  # a run that leaves the ball of radius reach and comes back is longer
    a, b, i, j = a[keep], b[keep], i[keep], j[keep]
    d = _edge_distances(walls, a, b)
    close = d < gap
    i, j, d = i[close], j[close], d[close]
    for k in np.argsort(d, kind="stable"):
        first, second = int(i[k]), int(j[k])
        away = np.linalg.norm(p[first + 1 : second] - p[first], axis=1)
        if away.size and float(away.max()) > reach:  # the path went away and came back: another run
            seg = np.clip(np.searchsorted(line.breaks, s[[first, second]], side="right") - 1, 0, len(line.segments) - 1)
            return WallContact(float(s[first]), float(s[second]), int(seg[0]), int(seg[1]), float(d[k]))
    return None
