"""A merged tetrahedral surface keeps each port's outline on the design's section rectangle.

The 3D picture draws a large mesh's surface merged by vertex clustering
(``report/drawing_surface``). Each port (a plane rectangle, the section) and the wall are
merged on their own; a cluster that straddles the port's outline must be drawn at a node on
that outline, or the port is notched and the wall pokes into it. The reference is outside the
merge: the exact section rectangle of the design (width w across the centreline's normal,
height h about mid-height z = 0, docs/design.md), placed at the path's ends, its area w h and
perimeter 2 (w + h) (elementary geometry). A cluster node lies on an outline or not: the
tolerance (1e-9 of the section) only absorbs rounding.
"""

from __future__ import annotations

import numpy as np
import pytest

import chanmesh.report.drawing_surface as ds
from chanmesh.design import loads_design
from chanmesh.geometry.centerline import centerline_of
from chanmesh.meshing.tet import mesh_tet
from chanmesh.report.drawing_surface import drawing_surface

W, H = 200e-6, 80e-6
ARC = """
name = "edge-arc"
unit = "um"
[section]
width = 200
height = 80
[path]
kind = "arc"
radius = 600
angle = 45
[mesh]
cells = "tet"
cells_across = 5
"""


@pytest.fixture(scope="module", params=[90, 45])
def arc_and_mesh(request):
    """90 degrees: ports facing along the axes, as the demo arc's; 45: both port planes turned
    45 degrees between the x and y axes, where the dominant axis of a facet's normal is a tie."""
    design = loads_design(ARC.replace("angle = 45", f"angle = {request.param}"))
    return design, mesh_tet(design)


def _outline(polygons: list[np.ndarray]) -> np.ndarray:
    """(e, 2) node pairs of the edges used by one polygon only: the outline of a group."""
    edges = np.concatenate([np.stack([c, np.roll(c, -1, axis=1)], axis=2).reshape(-1, 2) for c in polygons])
    edges = np.sort(edges, axis=1)
    unique, count = np.unique(edges, axis=0, return_counts=True)
    return unique[count == 1]


def _section_frames(design) -> dict[str, tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Each port's centre (x, y, 0), unit normal of its plane (the path's tangent) and unit
    direction across the width (the path's normal), from the design's path."""
    line = centerline_of(design)
    s = np.array([0.0, line.length])
    points, tangents, normals = line.points(s), line.tangents(s), line.normals(s)
    return {"inlet": (points[0], tangents[0], normals[0]), "outlet": (points[1], tangents[1], normals[1])}


def _rectangle_coordinates(p: np.ndarray, frame) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Distance off the port's plane, across the width and up, of points ``p`` (m)."""
    centre, along, across = frame
    d = p - centre
    return d @ along, d @ across, d[:, 2]


def _on_perimeter(off: np.ndarray, u: np.ndarray, z: np.ndarray, tol: float) -> np.ndarray:
    inside = (np.abs(off) < tol) & (np.abs(u) <= W / 2 + tol) & (np.abs(z) <= H / 2 + tol)
    return inside & ((np.abs(np.abs(u) - W / 2) < tol) | (np.abs(np.abs(z) - H / 2) < tol))


def test_merged_ports_keep_the_section_rectangle_and_the_wall_meets_them(arc_and_mesh, monkeypatch):
    design, mesh = arc_and_mesh
    monkeypatch.setattr(ds, "FEW", 20)  # a small mesh: let the ports merge too, as a large mesh's do
    whole = drawing_surface(mesh, 10**9)
    ports = {n: sum(len(c) for c in whole.polygons[n]) for n in ("inlet", "outlet")}
    merged = drawing_surface(mesh, whole.facets // 4)
    assert merged.merged
    for name, count in ports.items():  # the ports are merged, not kept whole
        assert sum(len(c) for c in merged.polygons[name]) < count
    tol = 1e-9 * W
    p = merged.points
    frames = _section_frames(design)
    for name, frame in frames.items():
        off, u, z = _rectangle_coordinates(p, frame)
        polygons = merged.polygons[name]
        nodes = np.unique(np.concatenate([c.ravel() for c in polygons]))
        assert np.abs(off[nodes]).max() < tol  # every node in the port's plane
        outline = _outline(polygons)
        at = _on_perimeter(off, u, z, tol)
        # the port's outline runs on the section rectangle only: no notch cuts into it
        assert at[outline].all(), f"{name}: {int((~at[outline]).any(axis=1).sum())} outline edges off the rectangle"
        # and round all of it, once: perimeter 2 (w + h)
        length = float(np.linalg.norm(p[outline[:, 0]] - p[outline[:, 1]], axis=1).sum())
        assert length == pytest.approx(2 * (W + H), rel=1e-9)
        # vector area w h: a surface's vector area depends only on its boundary curve (Stokes's
        # theorem), folds cancel, so this checks the outline is the rectangle traversed once
        vector_area = sum((ds.facet_normals(p, c).sum(axis=0) for c in polygons), np.zeros(3))
        assert float(np.linalg.norm(vector_area)) == pytest.approx(W * H, rel=1e-9)
        # the wall meets the port all round: its merged outline runs on the same rectangle for
        # the whole perimeter (a notch would take the wall's outline off it)
        wall = _outline(merged.polygons["wall"])
        wall = wall[at[wall].all(axis=1)]
        wall_length = float(np.linalg.norm(p[wall[:, 0]] - p[wall[:, 1]], axis=1).sum())
        assert wall_length == pytest.approx(2 * (W + H), rel=1e-9)
