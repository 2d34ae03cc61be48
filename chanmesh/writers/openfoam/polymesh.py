"""A ``ChannelMesh`` as OpenFOAM's face-based polyMesh: points, faces, owner, neighbour,
patches and face zones, all numpy, no loop over cells.

OpenFOAM describes a mesh by its faces. Every face has an owner cell and its nodes run so that
the face normal points out of the owner; an internal face also has a neighbour, with
owner < neighbour. Internal faces come first, in upper-triangular order (by owner, then by
neighbour); boundary faces follow, grouped per patch (OpenFOAM User Guide, "Mesh description").

How the faces are found: every face of every cell is listed in the cell's outward node order
(``meshing.verify.FACES``), the copies of one face are paired by their three smallest nodes
(``post.facepairs.pair_keys``, a hash-and-sort), the copy from the lower-numbered cell of a
pair is kept (so it points out of the owner), and faces without a partner are the boundary.
Boundary faces take the group of the boundary facet with the same nodes; internal faces that
are facets of a ``section_*`` group form that group's face zone.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.errors import ChanmeshError
from chanmesh.meshing.model import ChannelMesh, Group
from chanmesh.meshing.verify import FACES, INTERNAL_PREFIX
from chanmesh.post.facepairs import pair_keys, sorted_order, three_smallest_columns


class PolyMeshError(ChanmeshError):
    """The mesh cannot be described as a polyMesh (a chanmesh bug, not user input)."""


@dataclass(frozen=True)
class Patch:
    name: str
    type: str  # "patch" | "wall"
    start: int
    size: int


@dataclass(frozen=True)
class Zone:
    """A face zone: face labels and, per face, whether the zone normal is the face normal flipped."""

    name: str
    faces: np.ndarray
    flip: np.ndarray


@dataclass
class PolyMesh:
    points: np.ndarray  # (n, 3) float64, m
    offsets: np.ndarray  # (n_faces + 1,) start of each face in ``nodes``
    nodes: np.ndarray  # flat node labels of all faces
    owner: np.ndarray  # (n_faces,)
    neighbour: np.ndarray  # (n_internal,)
    n_cells: int
    patches: list[Patch]
    zones: list[Zone]

    @property
    def n_faces(self) -> int:
        return len(self.owner)

    @property
    def n_internal(self) -> int:
        return len(self.neighbour)


def patch_type(group: Group) -> str:
    """OpenFOAM patch type of a surface group: ``wall`` for the wall, ``patch`` for the rest."""
    return "wall" if group.name == "wall" or group.name.startswith("wall_") else "patch"


@dataclass
class _Faces:
    """Faces of one size (3 or 4 nodes) as node columns, with the cell each copy belongs to."""

    cols: list[np.ndarray]
    cell: np.ndarray

    def take(self, sel: np.ndarray) -> "_Faces":
        return _Faces([c[sel] for c in self.cols], self.cell[sel])


def _cell_faces(mesh: ChannelMesh, size: int, dtype: type) -> _Faces | None:
    """Every face of ``size`` nodes of every volume cell, in the cell's outward order."""
    cols: list[list[np.ndarray]] = [[] for _ in range(size)]
    cells: list[np.ndarray] = []
    offset = 0
    for block in mesh.volumes:
        local = FACES[block.type][0 if size == 3 else 1]
        ids = np.arange(offset, offset + len(block.cells), dtype=np.int64)
        for face in local:
            for r, corner in enumerate(face):
                cols[r].append(block.cells[:, corner].astype(dtype))
            cells.append(ids)
        offset += len(block.cells)
    if not cells:
        return None
    return _Faces([np.concatenate(c) for c in cols], np.concatenate(cells))


def _match(keys: tuple[np.ndarray, ...], facets: np.ndarray, what: str) -> tuple[np.ndarray, np.ndarray]:
    """Pair faces given by their three smallest nodes ``keys`` with facet rows ``facets``:
    (index of the face, index of the facet) for every facet that is one of the faces."""
    f = three_smallest_columns([facets[:, r] for r in range(facets.shape[1])])
    n = len(keys[0])
    partner = pair_keys(*(np.concatenate([k.astype(np.int64), fk.astype(np.int64)]) for k, fk in zip(keys, f)))
    facet_partner = partner[n:]
    if np.any(facet_partner < 0) or np.any(facet_partner >= n):
        raise PolyMeshError(f"{int(np.sum((facet_partner < 0) | (facet_partner >= n)))} {what} facets are not faces of the mesh")
    return facet_partner, np.arange(len(facets))


def _facets_of_size(mesh: ChannelMesh, size: int, tags: set[int]) -> tuple[np.ndarray, np.ndarray]:
    ftype = "triangle" if size == 3 else "quad"
    rows, tg = [], []
    for b in mesh.facets:
        if b.type == ftype:
            sel = np.isin(b.tags, list(tags))
            rows.append(b.cells[sel])
            tg.append(b.tags[sel])
    if not rows:
        return np.zeros((0, size), np.int64), np.zeros(0, np.int64)
    return np.concatenate(rows), np.concatenate(tg)


def _area_vectors(points: np.ndarray, offsets: np.ndarray, nodes: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """Area vectors (m^2) of the faces ``faces``: half the cross product of the diagonals for
    quads (exact for planar and warped quads alike), of two edges for triangles."""
    size = offsets[faces + 1] - offsets[faces]
    out = np.zeros((len(faces), 3))
    p = [points[nodes[offsets[faces] + np.minimum(r, size - 1)]] for r in range(4)]
    quad = size == 4
    out[quad] = 0.5 * np.cross(p[2][quad] - p[0][quad], p[3][quad] - p[1][quad])
    tri = ~quad
    out[tri] = 0.5 * np.cross(p[1][tri] - p[0][tri], p[2][tri] - p[0][tri])
    return out


def poly_mesh(mesh: ChannelMesh, downstream: dict[str, np.ndarray] | None = None) -> PolyMesh:
    """The polyMesh of ``mesh``. ``downstream`` maps a ``section_*`` group name to the unit
    vector its zone normal must point along (the flipMap is set per face so that it does);
    zones without one keep the owner-to-neighbour normal."""
    downstream = downstream or {}
    n_cells = mesh.n_volume_cells
    dtype = np.int32 if len(mesh.points) < 2**31 - 1 else np.int64
    surface = [g for g in mesh.groups if g.dim == 2]
    sections = [g for g in surface if g.name.startswith(INTERNAL_PREFIX)]
    boundary_groups = [g for g in surface if not g.name.startswith(INTERNAL_PREFIX)]
    patch_index = {g.tag: i for i, g in enumerate(boundary_groups)}

    internal: list[tuple[_Faces, np.ndarray]] = []  # (faces, neighbour)
    boundary: list[tuple[_Faces, np.ndarray]] = []  # (faces, patch index)
    zone_parts: list[tuple[int, int, np.ndarray, np.ndarray]] = []  # (size, part, face index, tag)
    for size in (3, 4):
        faces = _cell_faces(mesh, size, dtype)
        if faces is None:
            continue
        a, b, c = three_smallest_columns(faces.cols)
        partner = pair_keys(a, b, c)
        other = np.where(partner >= 0, faces.cell[np.maximum(partner, 0)], -1)
        keep = (partner >= 0) & (faces.cell < other)
        if np.any((partner >= 0) & (faces.cell == other)):
            raise PolyMeshError("a cell has two faces on the same nodes")
        inner = faces.take(keep)
        neighbour = other[keep]
        # boundary faces -> patch of the facet on the same nodes
        out = partner < 0
        bfaces = faces.take(out)
        facets, ftags = _facets_of_size(mesh, size, set(patch_index))
        if len(bfaces.cell) != len(facets):
            raise PolyMeshError(f"{len(bfaces.cell)} boundary faces of {size} nodes but {len(facets)} boundary facets")
        if len(facets):
            face_of, facet_idx = _match((a[out], b[out], c[out]), facets, "boundary")
            lut = np.full(max(patch_index) + 1, -1, np.int64)
            lut[list(patch_index)] = list(patch_index.values())
            pidx = np.empty(len(facets), np.int64)
            pidx[face_of] = lut[ftags[facet_idx]]
            boundary.append((bfaces, pidx))
        # section facets -> internal faces
        sfacets, stags = _facets_of_size(mesh, size, {g.tag for g in sections})
        if len(sfacets):
            on = np.zeros(len(mesh.points), bool)
            on[sfacets.ravel()] = True
            cand = np.flatnonzero(np.logical_and.reduce([on[col] for col in inner.cols]))
            ka, kb, kc = three_smallest_columns([col[cand] for col in inner.cols])
            face_of, facet_idx = _match((ka, kb, kc), sfacets, "section")
            zone_parts.append((size, len(internal), cand[face_of], stags[facet_idx]))
        internal.append((inner, neighbour))

    # internal faces in upper-triangular order
    owner_i = np.concatenate([f.cell for f, _ in internal]) if internal else np.zeros(0, np.int64)
    neigh_i = np.concatenate([n for _, n in internal]) if internal else np.zeros(0, np.int64)
    order_i = sorted_order(owner_i * n_cells + neigh_i)
    # boundary faces grouped per patch, by owner inside a patch
    owner_b = np.concatenate([f.cell for f, _ in boundary]) if boundary else np.zeros(0, np.int64)
    patch_b = np.concatenate([p for _, p in boundary]) if boundary else np.zeros(0, np.int64)
    order_b = sorted_order(patch_b * n_cells + owner_b)
    parts = [f for f, _ in internal] + [f for f, _ in boundary]
    sizes = np.concatenate([np.full(len(f.cell), len(f.cols), np.int64) for f in parts])
    order = np.concatenate([order_i, order_b + len(owner_i)])
    nodes, offsets = _flat_nodes(parts, sizes, order, dtype)
    owner = np.concatenate([owner_i[order_i], owner_b[order_b]])
    neighbour = neigh_i[order_i]

    points, nodes = _compact_points(mesh.points, nodes)
    counts = np.bincount(patch_b, minlength=len(boundary_groups))
    starts = len(owner_i) + np.concatenate([[0], np.cumsum(counts)[:-1]])
    patches = [Patch(g.name, patch_type(g), int(s), int(n)) for g, s, n in zip(boundary_groups, starts, counts)]

    inverse = np.empty(len(order_i), np.int64)
    inverse[order_i] = np.arange(len(order_i))
    first_of_part = np.concatenate([[0], np.cumsum([len(f.cell) for f, _ in internal])])
    zones = []
    for g in sections:
        labels = [inverse[first_of_part[part] + idx[tags == g.tag]] for _, part, idx, tags in zone_parts]
        faces = np.sort(np.concatenate(labels)) if labels else np.zeros(0, np.int64)
        flip = np.zeros(len(faces), bool)
        if g.name in downstream and len(faces):
            flip = _area_vectors(points, offsets, nodes, faces) @ np.asarray(downstream[g.name], float) < 0
        zones.append(Zone(g.name, faces, flip))
    return PolyMesh(points, offsets, nodes, owner, neighbour, n_cells, patches, zones)


def _flat_nodes(parts: list[_Faces], sizes: np.ndarray, order: np.ndarray, dtype: type) -> tuple[np.ndarray, np.ndarray]:
    """Face nodes of ``parts`` (concatenated, then taken in ``order``) as one flat list and offsets."""
    sizes = sizes[order]
    offsets = np.zeros(len(sizes) + 1, np.int64)
    np.cumsum(sizes, out=offsets[1:])
    if len({len(f.cols) for f in parts}) == 1:  # one face size: a plain (m, k) table
        k = len(parts[0].cols)
        table = np.empty((len(order), k), dtype)
        for r in range(k):
            table[:, r] = np.concatenate([f.cols[r] for f in parts])[order]
        return table.reshape(-1), offsets
    table = np.full((len(order), 4), -1, np.int64)
    row = 0
    for f in parts:
        for r, col in enumerate(f.cols):
            table[row:row + len(col), r] = col
        row += len(f.cell)
    table = table[order]
    flat = table.reshape(-1)
    return flat[flat >= 0].astype(dtype), offsets


def _compact_points(points: np.ndarray, nodes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Drop points no face uses (OpenFOAM's checkMesh counts unused points as an error)."""
    used = np.zeros(len(points), bool)
    used[nodes] = True
    if used.all():
        return points, nodes
    remap = (np.cumsum(used) - 1).astype(nodes.dtype)
    return points[used], remap[nodes]
