"""Embed exact cross-sections in the OpenCASCADE solid as conforming internal surfaces.

At each station a plane face slightly larger than the exact cross-section (same corner
construction as the solid's own end faces, ``solids.section_face``; a margin of 2 % of the
width, below the 5 % wall kept between spiral turns) is fragmented with the volume. The cut
is then the solid's own section, which matters for the spline pipe of a spiral (about 10 nm
off the ideal wall, GMSH-NOTES): an exact-size face missed it and did not split the volume.
The ring outside the solid is removed. The volume splits into k + 1 pieces that share the
section faces, so the mesh has nodes and triangles exactly on each plane. All pieces stay one
``fluid`` group; the faces at station k become ``section_k``.

The same cut, unnamed, splits long channels into pieces for gmsh's surface step
(``surface_splits``): Frontal-Delaunay's time per triangle grows with the size of the face it
meshes, and a spiral's walls are four faces several turns long. Measured on the bench spiral
(bench/RESULTS.md, "Tetrahedra"): at 450 k wall triangles the surface step took 24.4 s as four
long faces and 9.2 s cut into 25 pieces. The unnamed faces stay inside the mesh (the
tetrahedra conform to them) but belong to no group, so no writer sees them.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import gmsh
import numpy as np

from chanmesh.design.model import ChambersPath, Design
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.section import section_shape_of
from chanmesh.gmshlayer.solids import section_face
from chanmesh.geometry.stations import Outline, mesh_station_arc_lengths, outline_at

MARGIN_ACROSS = 0.02  # of the section width
MARGIN_HIGH = 0.10  # of the section height

TRIANGLES_PER_PIECE = 16_000
"""Wall triangles (all walls together) in one piece of ``surface_splits``: about 4,000 a face.
Fewer pieces left the surface step slow; more made the cut itself dearer than it saved (about
0.07 s a cut on the bench spiral; 25 pieces of 18 k gave 28.2 s in all, 65 pieces 30.1 s)."""

TRIANGLES_PER_AREA = 4 / math.sqrt(3)
"""Equilateral triangles of side h per h^2 of surface."""


def surface_splits(design: Design, wall_size: float, core_size: float) -> list[float]:
    """Arc lengths (m) at which to cut the channel so that no piece's walls carry much more than
    ``TRIANGLES_PER_PIECE`` triangles of side ``wall_size`` (m); none for short channels or
    chamber arrays, and none within ``max(2 core_size, w / 2)`` of an end, a centreline
    segment's joint or a section station, where a cut would leave a sliver face."""
    if isinstance(design.path, ChambersPath):
        return []
    shape = section_shape_of(design)
    line = centerline_of(design)
    length = line.length
    perimeter = 2.0 * (shape.width + shape.mean_height)
    triangles = TRIANGLES_PER_AREA * perimeter * length / wall_size**2
    pieces = math.ceil(triangles / TRIANGLES_PER_PIECE)
    if pieces <= 1:
        return []
    keep_off = max(2.0 * core_size, 0.5 * shape.width)
    avoid = np.concatenate([np.asarray(line.breaks, float), np.asarray(mesh_station_arc_lengths(design), float)])
    cuts = np.linspace(0.0, length, pieces + 1)[1:-1]
    near = np.abs(cuts[:, None] - avoid[None, :]).min(axis=1) < keep_off
    return [float(c) for c in cuts[~near]]


def embed_sections(design: Design, volume: int, splits: Sequence[float] = ()) -> tuple[list[int], list[list[int]], list[list[int]]]:
    """Fragment ``volume`` with the section faces of ``mesh.sections`` and, unnamed, at the
    arc lengths ``splits`` (m, see ``surface_splits``).

    Returns (volume pieces, surface tags of each section in station order, surface tags of each
    unnamed cut in ``splits`` order); the model is synchronized. Without either: ([volume], [], []).
    """
    stations = list(mesh_station_arc_lengths(design))
    cuts = stations + [float(s) for s in splits]
    if not cuts:
        return [volume], [], []
    line = centerline_of(design)
    occ = gmsh.model.occ
    faces = [section_face(line, _enlarged(outline_at(design, s)), s) for s in cuts]
    out, out_map = occ.fragment([(3, volume)], [(2, f) for f in faces])
    occ.synchronize()
    volumes = [tag for dim, tag in out_map[0] if dim == 3]
    if len(volumes) != len(cuts) + 1:
        raise RuntimeError(
            f"embedding {len(stations)} sections and {len(cuts) - len(stations)} surface cuts split the channel "
            f"into {len(volumes)} volumes, expected {len(cuts) + 1}: a section face does not match the solid"
        )
    bounding = {int(s) for v in volumes for s in gmsh.model.getAdjacencies(3, v)[1]}
    inner: list[list[int]] = []
    rings: list[tuple[int, int]] = []
    for k, pieces in enumerate(out_map[1:]):
        tags = [tag for dim, tag in pieces if dim == 2]
        inside = [t for t in tags if t in bounding]
        rings += [(2, t) for t in tags if t not in bounding]
        if not inside:
            what = f"section {k + 1}" if k < len(stations) else "a surface cut"
            raise RuntimeError(f"{what} at s = {cuts[k]:.6g} m is not inside the channel solid")
        inner.append(inside)
    if rings:
        occ.remove(rings, recursive=True)
        occ.synchronize()
    return volumes, inner[: len(stations)], inner[len(stations):]


def _enlarged(outline: Outline) -> Outline:
    mu = MARGIN_ACROSS * (outline.u1 - outline.u0)
    mv = MARGIN_HIGH * (max(outline.top0, outline.top1) - outline.bottom)
    return Outline(outline.u0 - mu, outline.u1 + mu, outline.bottom - mv, outline.top0 + mv, outline.top1 + mv)
