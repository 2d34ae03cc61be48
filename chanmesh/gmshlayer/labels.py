"""Name the boundary of the channel solid: inlet (or inlet_1..n), outlet (or outlet_1..n), wall, fluid.

Faces are picked by geometric query after synchronize (centre of mass and normal against the
centreline's end frames), never by tag number: tags change after every boolean operation.
"""

from __future__ import annotations

from dataclasses import dataclass

import gmsh
import numpy as np

from chanmesh.design.model import Design
from chanmesh.geometry.centerline import Centerline, centerline_of
from chanmesh.geometry.section import section_shape_of
from chanmesh.gmshlayer.session import MODEL_UNIT

PLANE_TOL = 1e-6  # model units (mm): 1 nm


@dataclass(frozen=True)
class EndFrame:
    point: np.ndarray  # model units
    tangent: np.ndarray
    normal: np.ndarray


def end_frames(line: Centerline) -> tuple[EndFrame, EndFrame]:
    s = np.array([0.0, line.length])
    p = line.points(s) / MODEL_UNIT
    t = line.tangents(s)
    n = line.normals(s)
    return EndFrame(p[0], t[0], n[0]), EndFrame(p[1], t[1], n[1])


def split_ends(design: Design, volume: int) -> int:
    """Imprint vertical lines on the inlet and outlet faces at their split fractions; returns
    the volume tag.

    The lines are placed between each face's own corners (not the ideal section), so they lie
    on the face to round-off even where a pipe's end face is tilted by a few nanometres.
    """
    ends = [(design.inlets.split, 0), (design.outlets.split, 1)]
    if all(len(split) <= 1 for split, _ in ends):
        return volume
    line = centerline_of(design)
    shape = section_shape_of(design)
    frames = end_frames(line)
    half_extent = _half_extent(shape)
    faces = [int(s) for s in gmsh.model.getAdjacencies(3, volume)[1]]
    occ = gmsh.model.occ
    cuts = []
    for split, which in ends:
        if len(split) <= 1:
            continue
        frame = frames[which]
        face = [s for s in faces if _on_end(_com(s), _normal(s), frame, half_extent)]
        if len(face) != 1:
            raise RuntimeError(f"the {('inlet', 'outlet')[which]} matched {len(face)} faces, expected exactly 1")
        corners = np.array([gmsh.model.getValue(0, c[1], []) for c in gmsh.model.getBoundary([(2, face[0])], recursive=True)])
        u = (corners - frame.point) @ frame.normal
        z = corners[:, 2]
        inner = corners[u < 0][np.argsort(z[u < 0])]  # bottom, top
        outer = corners[u > 0][np.argsort(z[u > 0])]
        for frac in np.cumsum(split)[:-1]:
            a = inner[0] + frac * (outer[0] - inner[0])
            b = inner[1] + frac * (outer[1] - inner[1])
            cuts.append((1, occ.addLine(occ.addPoint(*a), occ.addPoint(*b))))
    out, _ = occ.fragment([(3, volume)], cuts)
    occ.synchronize()
    vols = [dt[1] for dt in out if dt[0] == 3]
    if len(vols) != 1:
        raise RuntimeError(f"splitting the inlet or outlet gave {len(vols)} volumes, expected 1")
    return vols[0]


def _com(surface: int) -> np.ndarray:
    return np.array(gmsh.model.occ.getCenterOfMass(2, surface))


def _normal(surface: int) -> np.ndarray:
    uv = gmsh.model.getParametrizationBounds(2, surface)
    mid = [0.5 * (uv[0][0] + uv[1][0]), 0.5 * (uv[0][1] + uv[1][1])]
    return np.array(gmsh.model.getNormal(surface, mid))


def _half_extent(shape) -> float:  # type: ignore[no-untyped-def]
    """Largest distance from the centreline point to any point of an end face (model units)."""
    return 0.5 * float(np.hypot(shape.width, 2 * shape.max_height)) / MODEL_UNIT * 1.01


def _on_end(com: np.ndarray, normal: np.ndarray, frame: EndFrame, half_extent: float) -> bool:
    off = com - frame.point
    return (
        abs(float(off @ frame.tangent)) < PLANE_TOL * 10
        and abs(abs(float(normal @ frame.tangent)) - 1.0) < 1e-6
        and float(np.linalg.norm(off)) < half_extent
    )


def label_boundary(design: Design, volume: int | list[int], sections: list[list[int]] | None = None,
                   unnamed: list[int] | None = None) -> dict[str, list[int]]:
    """Assign every boundary surface of the fluid to one named group and add the physical groups.

    ``volume`` is the fluid volume, or its pieces when internal ``sections`` (surface tags of
    section_1, section_2, ...) or ``unnamed`` cuts split it; those faces are internal and skip
    classification, and the unnamed ones join no group.
    Group tags: inlet(s), outlet(s), wall, section_1..k, fluid. Returns name -> tags (and
    ``fluid`` -> the volumes). Raises if a named end is missing.
    """
    volumes = [volume] if isinstance(volume, int) else list(volume)
    sections = sections or []
    internal = {s for faces in sections for s in faces} | set(unnamed or ())
    line = centerline_of(design)
    shape = section_shape_of(design)
    start, end = end_frames(line)
    half_extent = _half_extent(shape)
    ports = [(design.inlets, start), (design.outlets, end)]
    groups: dict[str, list[int]] = {n: [] for p, _ in ports for n in p.names}
    groups["wall"] = []
    surfaces = sorted({int(s) for v in volumes for s in gmsh.model.getAdjacencies(3, v)[1]} - internal)
    for s in surfaces:
        com, normal = _com(s), _normal(s)
        for port, frame in ports:
            if _on_end(com, normal, frame, half_extent):
                # the piece by its fraction across the width from u = -w/2, as the hex mesher does
                u = float((com - frame.point) @ frame.normal) * MODEL_UNIT
                frac = (u + 0.5 * shape.width) / shape.width
                edges = np.cumsum((0.0,) + tuple(port.split or (1.0,)))
                k = int(np.clip(np.searchsorted(edges, frac) - 1, 0, len(port.names) - 1))
                groups[port.names[k]].append(s)
                break
        else:
            groups["wall"].append(s)
    for name, tags in groups.items():
        if name != "wall" and len(tags) != 1:
            raise RuntimeError(f"boundary '{name}' matched {len(tags)} faces, expected exactly 1")
    for k, faces in enumerate(sections, start=1):
        groups[f"section_{k}"] = list(faces)
    tag = 1
    for name, tags in groups.items():
        gmsh.model.addPhysicalGroup(2, tags, tag=tag, name=name)
        tag += 1
    gmsh.model.addPhysicalGroup(3, volumes, tag=tag, name="fluid")
    groups["fluid"] = volumes
    return groups
