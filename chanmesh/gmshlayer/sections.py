"""Embed exact cross-sections in the OpenCASCADE solid as conforming internal surfaces.

At each station a plane face slightly larger than the exact cross-section (same corner
construction as the solid's own end faces, ``solids.section_face``; a margin of 2 % of the
width, below the 5 % wall kept between spiral turns) is fragmented with the volume. The cut
is then the solid's own section, which matters for the spline pipe of a spiral (about 10 nm
off the ideal wall, GMSH-NOTES): an exact-size face missed it and did not split the volume.
The ring outside the solid is removed. The volume splits into k + 1 pieces that share the
section faces, so the mesh has nodes and triangles exactly on each plane. All pieces stay one
``fluid`` group; the faces at station k become ``section_k``.
"""

from __future__ import annotations

import gmsh

from chanmesh.design.model import Design
from chanmesh.geometry.centerline import centerline_of
from chanmesh.gmshlayer.solids import section_face
from chanmesh.geometry.stations import Outline, mesh_station_arc_lengths, outline_at

MARGIN_ACROSS = 0.02  # of the section width
MARGIN_HIGH = 0.10  # of the section height


def embed_sections(design: Design, volume: int) -> tuple[list[int], list[list[int]]]:
    """Fragment ``volume`` with the section faces of ``mesh.sections``.

    Returns (volume pieces, surface tags of each section in station order); the model is
    synchronized. Without sections: ([volume], []).
    """
    stations = mesh_station_arc_lengths(design)
    if not stations:
        return [volume], []
    line = centerline_of(design)
    occ = gmsh.model.occ
    faces = [section_face(line, _enlarged(outline_at(design, s)), s) for s in stations]
    out, out_map = occ.fragment([(3, volume)], [(2, f) for f in faces])
    occ.synchronize()
    volumes = [tag for dim, tag in out_map[0] if dim == 3]
    if len(volumes) != len(stations) + 1:
        raise RuntimeError(
            f"embedding {len(stations)} sections split the channel into {len(volumes)} volumes, "
            f"expected {len(stations) + 1}: a section face does not match the solid"
        )
    bounding = {int(s) for v in volumes for s in gmsh.model.getAdjacencies(3, v)[1]}
    sections: list[list[int]] = []
    rings: list[tuple[int, int]] = []
    for k, pieces in enumerate(out_map[1:]):
        tags = [tag for dim, tag in pieces if dim == 2]
        inside = [t for t in tags if t in bounding]
        rings += [(2, t) for t in tags if t not in bounding]
        if not inside:
            raise RuntimeError(f"section {k + 1} at s = {stations[k]:.6g} m is not inside the channel solid")
        sections.append(inside)
    if rings:
        occ.remove(rings, recursive=True)
        occ.synchronize()
    return volumes, sections


def _enlarged(outline: Outline) -> Outline:
    mu = MARGIN_ACROSS * (outline.u1 - outline.u0)
    mv = MARGIN_HIGH * (max(outline.top0, outline.top1) - outline.bottom)
    return Outline(outline.u0 - mu, outline.u1 + mu, outline.bottom - mv, outline.top0 + mv, outline.top1 + mv)
