"""Sections in a swept hexahedral mesh: a node layer exactly at each station, tagged ``section_k``.

A swept mesh has node layers at arc lengths s_0 = 0 < s_1 < ... < s_nk = L. Two steps:

1. ``layers_through_stations(s, stations, keep)`` moves the layer nearest each station onto it
   (keeping the segment breaks ``keep`` fixed, stretching the layers in between linearly), so
   that the layer is the exact plane of the section; the stations come from
   ``chanmesh.geometry.stations.mesh_station_arc_lengths(design)``;
2. ``tag_section_layers(mesh, design, stations)`` finds, for each station, the quad faces of
   hexahedra whose four nodes lie on that plane inside its outline, and adds them as groups
   ``section_1..k`` between ``wall`` and ``fluid`` (the fluid group's tag moves up to stay last).
"""

from __future__ import annotations

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.verify import FACES, INTERNAL_PREFIX
from chanmesh.geometry.stations import outline_at

PLANE_TOL = 1e-6  # of the section width: nodes this close to a station plane lie on it


def layers_through_stations(s: np.ndarray, stations: list[float], keep: np.ndarray | None = None) -> tuple[np.ndarray, list[int]]:
    """Layer arc lengths with one layer exactly at each station, and that layer's index.

    ``s`` (nk + 1,) increasing, m; ``keep`` arc lengths that must stay layers (segment breaks,
    the two ends). Raises ``DesignError`` (key ``mesh.sections``) when two stations would need
    the same layer.
    """
    s = np.asarray(s, dtype=float)
    anchors: dict[int, float] = {0: float(s[0]), len(s) - 1: float(s[-1])}
    for b in np.atleast_1d(keep if keep is not None else []):
        k = int(np.argmin(np.abs(s - b)))
        anchors[k] = float(s[k])
    picks = []
    fixed = dict(anchors)
    for st in stations:
        same = [k for k, v in fixed.items() if abs(v - st) <= 1e-12 * max(abs(st), 1e-300)]
        if same:  # a station on a segment break: that layer is already exact
            picks.append(same[0])
            continue
        k = _free_layer(s, anchors, float(st))
        anchors[k] = float(st)
        picks.append(k)
    idx = np.array(sorted(anchors))
    vals = np.array([anchors[i] for i in idx])
    return np.interp(np.arange(len(s)), idx, vals), picks


def _free_layer(s: np.ndarray, anchors: dict[int, float], st: float) -> int:
    """The layer nearest ``st`` that is not an anchor and lies between the anchors bracketing it."""
    idx = np.array(sorted(anchors))
    vals = np.array([anchors[i] for i in idx])
    j = int(np.searchsorted(vals, st))  # anchors idx[j - 1] < st < idx[j]
    lo, hi = int(idx[j - 1]) + 1, int(idx[j]) - 1
    if lo > hi:
        raise DesignError("mesh.sections", f"s = {st * 1e3:.6g} mm",
                          "two stations (or a station and a segment break) fall in one cell along the flow; "
                          "raise mesh.cells_along or lower mesh.along_aspect")
    return lo + int(np.argmin(np.abs(s[lo:hi + 1] - st)))


def _quad_faces_on(mesh: ChannelMesh, on: np.ndarray) -> np.ndarray:
    """Each quad face (once) of the hexahedra whose four corners are all ``on`` (bool per node).
    Only cells with four or more corners on are looked at: linear in the mesh, a few rows sorted."""
    faces = []
    corners = np.array(FACES["hexahedron"][1])
    for b in mesh.volumes:
        if b.type != "hexahedron":
            continue
        touching = b.cells[on[b.cells].sum(axis=1) >= 4]
        quads = touching[:, corners].reshape(-1, 4)
        faces.append(quads[np.all(on[quads], axis=1)])
    if not faces:
        return np.zeros((0, 4), np.int64)
    all_faces = np.concatenate(faces)
    _, first = np.unique(np.sort(all_faces, axis=1), axis=0, return_index=True)
    return all_faces[np.sort(first)]


def section_quads(mesh: ChannelMesh, design: Design, s: float) -> np.ndarray:
    """(m, 4) quad faces of the hexahedra lying on the station plane at arc length ``s``, inside its outline."""
    line = centerline_of(design)
    a = np.array([s])
    p, t, n = line.points(a)[0], line.tangents(a)[0], line.normals(a)[0]
    outline = outline_at(design, s)
    tol = PLANE_TOL * (outline.u1 - outline.u0)
    d = mesh.points - p
    u, v = d @ n, d[:, 2]
    on = (np.abs(d @ t) < tol) & (u > outline.u0 - tol) & (u < outline.u1 + tol)
    on &= (v > outline.bottom - tol) & (v < np.asarray(outline.top(np.clip(u, outline.u0, outline.u1))) + tol)
    return _quad_faces_on(mesh, on)


def tag_section_layers(mesh: ChannelMesh, design: Design, stations: list[float]) -> ChannelMesh:
    """Add ``section_k`` quad groups at ``stations`` (m); groups inlet, outlet(s), wall,
    section_1..k, fluid. Raises ``RuntimeError`` when a station has no layer of faces."""
    if not stations:
        return mesh
    surfaces = [g for g in mesh.groups if g.dim == 2 and not g.name.startswith(INTERNAL_PREFIX)]
    volumes = [g for g in mesh.groups if g.dim == 3]
    top = max(g.tag for g in surfaces)
    blocks, new = [], []
    for k, s in enumerate(stations, start=1):
        quads = section_quads(mesh, design, s)
        if not len(quads):
            raise RuntimeError(f"no node layer at station {k} (s = {s:.6g} m); place one with layers_through_stations")
        g = Group(f"section_{k}", 2, top + k)
        new.append(g)
        blocks.append(Block("quad", quads, np.full(len(quads), g.tag, np.int64)))
    shift = {g.tag: top + len(stations) + 1 + i for i, g in enumerate(volumes)}
    moved = [Group(g.name, 3, shift[g.tag]) for g in volumes]
    for b in mesh.volumes:
        b.tags = np.vectorize(shift.get)(b.tags) if len(b.tags) else b.tags
    return ChannelMesh(mesh.points, mesh.volumes, mesh.facets + blocks, surfaces + new + moved, dict(mesh.info))
