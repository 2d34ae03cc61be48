"""Where the structured hexahedral grid puts its nodes, computed without building the mesh.

The grid is a tensor product in the centreline frame: arc length ``s`` along the flow, ``u``
across the width (along n = t x z) and a normalised height ``eta`` in [0, 1], mapped per
column onto the local section height (so a trapezoid's slanted top is a grid line):

    node (k, i, j):  p(s_k) + u_i n(s_k) + (bottom + eta_j (top(u_i) - bottom)) z

Chambers use the same grid with ``u`` spanning the chamber width and a mask that keeps the
side bands only over the chambers (see ``docs/hex.md``). Everything here is 1D arrays, so the
cell count that ``mesh.max_cells`` is checked against costs nothing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from chanmesh.design.model import ChambersPath, Design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.section import section_shape_of
from chanmesh.sizing import Grading, grading_of
from chanmesh.sizing import capped_nodes, graded_nodes, ratio_for_first_cell


@dataclass(frozen=True)
class HexPlan:
    """Node coordinates of the structured grid and which cells exist (metres)."""

    s: np.ndarray  # (nk + 1,) arc length of each node layer along the centreline
    u: np.ndarray  # (ni + 1,) offset across the width along n
    eta: np.ndarray  # (nj + 1,) normalised height, 0 at the bottom, 1 at the top
    band: tuple[int, int]  # node indices i0, i1 with u[i0] = -w/2 and u[i1] = +w/2
    outlet_nodes: tuple[int, ...]  # node indices across the channel band bounding each outlet
    chamber_cells: np.ndarray | None  # (nk,) bool: layer k lies in a chamber (None: no chambers)
    grading: Grading
    ratio_high: float  # growth ratio over the height
    first_high: float  # wall cell over the (mean) height, m
    inlet_nodes: tuple[int, ...] = ()  # as outlet_nodes, for the inlet (empty: the whole band)

    @property
    def shape(self) -> tuple[int, int, int]:
        """Cells along, across, high (of the full tensor grid, before masking)."""
        return len(self.s) - 1, len(self.u) - 1, len(self.eta) - 1

    def cell_mask(self) -> np.ndarray | None:
        """(nk, ni) bool of existing cell columns, or None when every cell exists."""
        if self.chamber_cells is None:
            return None
        nk, ni, _ = self.shape
        i0, i1 = self.band
        mask = np.zeros((nk, ni), bool)
        mask[:, i0:i1] = True
        mask[self.chamber_cells, :] = True
        return mask

    def cell_count(self) -> int:
        nk, ni, nj = self.shape
        mask = self.cell_mask()
        return nk * ni * nj if mask is None else int(mask.sum()) * nj


MAX_TURN_PER_CELL = 5.0
"""Degrees of heading change allowed per cell along a bend when ``cells_along`` is not given
(common practice, no source): straight-sided cells then cut off at most about 0.13 % of a
bend's volume (1 - sin(a)/a for a = 5 degrees), whatever ``along_aspect`` asks."""


def _scaled(n: int, scale: float, least: int) -> int:
    return max(least, int(round(n * scale)))


def _graded(length: float, n: int, grading: Grading, by_first_cell: bool) -> tuple[np.ndarray, float]:
    """A symmetric progression of ``n`` cells: the design's ratio, or the ratio that gives the
    design's first cell (uniform when that cell would exceed the uniform size)."""
    if by_first_cell:
        ratio = 1.0 if grading.h_wall * n >= length else ratio_for_first_cell(length, n, grading.h_wall)
    else:
        ratio = grading.ratio
    return graded_nodes(length, n, ratio), ratio


def _honour_split(nodes: np.ndarray, targets: np.ndarray) -> tuple[np.ndarray, tuple[int, ...]]:
    """Move the node nearest each target onto it, stretching the grid piecewise linearly in
    between, so that every outlet boundary is a grid line. Returns nodes and the indices."""
    n = len(nodes) - 1
    picks = [0]
    for q, t in enumerate(targets):
        k = int(np.argmin(np.abs(nodes - t)))
        # keep indices strictly increasing and leave room for the targets still to come
        picks.append(min(max(k, picks[-1] + 1), n - (len(targets) - q)))
    picks.append(n)
    anchors = np.concatenate([[nodes[0]], targets, [nodes[-1]]])
    moved = np.interp(nodes, nodes[picks], anchors)
    return moved, tuple(picks)


def _honour_splits(design: Design, u_band: np.ndarray, n_across: int) -> tuple[np.ndarray, tuple[int, ...], tuple[int, ...]]:
    """Put every inlet and outlet split line on a grid line (one shared set of lines where the
    two splits agree). Returns the moved nodes and the node indices bounding each inlet and
    each outlet piece, from u = -w/2."""
    w = design.section.width
    lines: list[np.ndarray] = []
    for port in (design.inlets, design.outlets):
        lines.append(-0.5 * w + w * np.cumsum(port.split)[:-1] if len(port.split) > 1 else np.zeros(0))
    targets = np.unique(np.round(np.concatenate(lines) / (1e-12 * w)) * (1e-12 * w))
    if len(targets) == 0:
        return u_band, (0, n_across), (0, n_across)
    if n_across < len(targets) + 1:
        raise DesignError(
            "mesh.cells_across", design.mesh.cells_across,
            f"the hexahedral mesher needs at least one cell between split lines ({len(targets)} distinct "
            f"lines from inlets.split and outlets.split need {len(targets) + 1} cells across)",
        )
    moved, picks = _honour_split(u_band, targets)

    def nodes(port_lines: np.ndarray) -> tuple[int, ...]:
        inner = [picks[1 + int(np.argmin(np.abs(targets - t)))] for t in port_lines]
        return (0, *inner, n_across)

    return moved, nodes(lines[0]), nodes(lines[1])


def _along_counts(lengths: np.ndarray, total: int) -> np.ndarray:
    """Split ``total`` cells over segments in proportion to length, at least one each
    (largest remainder, so the sum is exact whenever total >= number of segments)."""
    share = total * lengths / lengths.sum()
    counts = np.maximum(1, np.floor(share)).astype(int)
    short = total - counts.sum()
    if short > 0:
        counts[np.argsort(-(share - np.floor(share)))[:short]] += 1
    return counts


def plan_hex(design: Design, scale: float = 1.0) -> HexPlan:
    """The grid of ``design``; ``scale`` > 1 refines counts by ``scale`` and the first cell by
    1 / scale (through ``grading_of``, shared with the tetrahedral mesher)."""
    m = design.mesh
    shape = section_shape_of(design)
    w, H = shape.width, shape.mean_height
    grading = grading_of(design, scale)
    by_first = m.first_cell is not None
    n_across = _scaled(m.cells_across, scale, 2)
    u_band, _ = _graded(w, n_across, grading, by_first)
    u_band = u_band - 0.5 * w
    n_high = _scaled(m.cells_high, scale, 1) if m.cells_high is not None else max(2, int(round(n_across * H / w)))
    eta, ratio_high = _graded(H, n_high, grading, by_first)
    first_high = float(eta[1] - eta[0])
    eta = eta / H

    u_band, inlet_nodes, outlet_nodes = _honour_splits(design, u_band, n_across)

    line = centerline_of(design)
    h_along = (
        line.length / _scaled(m.cells_along, scale, 1) if m.cells_along is not None else m.along_aspect * grading.h_core
    )
    if isinstance(design.path, ChambersPath):
        return _chambers_plan(design, grading, by_first, u_band, inlet_nodes, outlet_nodes, eta, ratio_high, first_high, h_along)
    lengths = np.diff(line.breaks)
    total = _scaled(m.cells_along, scale, 1) if m.cells_along is not None else int(math.ceil(line.length / h_along - 1e-9))
    counts = _along_counts(lengths, max(total, len(lengths)))
    if m.cells_along is None:  # bends: at most MAX_TURN_PER_CELL of heading change per cell
        turn = np.array([abs(seg.turning) for seg in line.segments])
        counts = np.maximum(counts, np.ceil(turn / math.radians(MAX_TURN_PER_CELL) * scale - 1e-9).astype(int))
    s = np.concatenate(
        [[0.0]] + [b0 + np.linspace(0.0, L, c + 1)[1:] for b0, L, c in zip(line.breaks[:-1], lengths, counts)]
    )
    s[-1] = line.length
    s = _through_stations(design, s, line.breaks)
    return HexPlan(s, u_band, eta, (0, n_across), outlet_nodes, None, grading, ratio_high, first_high, inlet_nodes)


def _through_stations(design: Design, s: np.ndarray, keep: np.ndarray) -> np.ndarray:
    """Move the nearest node layers onto the design's section stations (``mesh.sections``),
    leaving the layers in ``keep`` (segment joins, chamber walls) where they are."""
    from chanmesh.meshing.hex_sections import layers_through_stations
    from chanmesh.geometry.stations import mesh_station_arc_lengths

    stations = mesh_station_arc_lengths(design)
    if stations:
        s, _ = layers_through_stations(s, stations, keep=keep)
    return s


def _chambers_plan(
    design: Design, grading: Grading, by_first: bool, u_band: np.ndarray, inlet_nodes: tuple[int, ...],
    outlet_nodes: tuple[int, ...],
    eta: np.ndarray, ratio_high: float, first_high: float, h_along: float,
) -> HexPlan:
    """Throats and chambers on one tensor grid: the throat walls' grid lines run on through
    the chambers, so each re-entrant corner is a grid node and throats and chambers share nodes."""
    path = design.path
    assert isinstance(path, ChambersPath)
    w = design.section.width
    n_across = len(u_band) - 1
    if path.one_sided:  # chamber from the right-hand wall (u = +w/2) toward u < 0
        lo, hi = 0.5 * w - path.chamber_width, 0.5 * w
    else:
        lo, hi = -0.5 * path.chamber_width, 0.5 * path.chamber_width
    pieces = []
    for a, b in ((lo, -0.5 * w), (0.5 * w, hi)):
        if b - a > 1e-12 * w:
            n_side = max(2, int(round(n_across * (b - a) / w)))
            pieces.append(a + _graded(b - a, n_side, grading, by_first)[0])
        else:
            pieces.append(np.zeros(0))
    left, right = pieces
    u = np.concatenate([left[:-1], u_band, right[1:]])
    i0 = max(len(left) - 1, 0)
    band = (i0, i0 + n_across)
    outlet_nodes = tuple(i0 + k for k in outlet_nodes)
    inlet_nodes = tuple(i0 + k for k in inlet_nodes)

    # along x: leads uniform; throats and chambers graded toward both ends (end walls)
    starts = [path.throat_length + k * (path.chamber_length + path.throat_length) for k in range(path.count)]
    x_marks = [0.0]
    for x0 in starts:
        x_marks += [x0, x0 + path.chamber_length]
    x_marks.append(starts[-1] + path.chamber_length + path.throat_length)
    s_marks = path.inlet_length + np.array(x_marks)
    parts = [np.array([0.0])]
    if path.inlet_length > 0:
        parts.append(np.linspace(0.0, path.inlet_length, int(math.ceil(path.inlet_length / h_along - 1e-9)) + 1)[1:])
    for a, b in zip(s_marks[:-1], s_marks[1:]):
        parts.append(a + capped_nodes(b - a, grading.h_wall, grading.ratio, h_along)[1:])
    if path.outlet_length > 0:
        e = s_marks[-1]
        n = int(math.ceil(path.outlet_length / h_along - 1e-9))
        parts.append(e + np.linspace(0.0, path.outlet_length, n + 1)[1:])
    s = _through_stations(design, np.concatenate(parts), np.concatenate([centerline_of(design).breaks, s_marks]))
    mid = 0.5 * (s[:-1] + s[1:]) - path.inlet_length
    in_chamber = np.zeros(len(mid), bool)
    for x0 in starts:
        in_chamber |= (mid > x0) & (mid < x0 + path.chamber_length)
    return HexPlan(s, u, eta, band, outlet_nodes, in_chamber, grading, ratio_high, first_high, inlet_nodes)
