"""A ``ChannelMesh`` as OpenFOAM's face-based polyMesh: points, faces, owner, neighbour,
patches and face zones, all numpy, no loop over cells.

OpenFOAM describes a mesh by its faces. Every face has an owner cell and its nodes run so that
the face normal points out of the owner; an internal face also has a neighbour, with
owner < neighbour. Internal faces come first, in upper-triangular order (by owner, then by
neighbour); boundary faces follow, grouped per patch (OpenFOAM User Guide, "Mesh description").

How the faces are found: the face table of ``meshing.faces`` (shared with the tagging check
and the quality figures, made once per mesh) pairs every face slot (cell, local face, in the
cell's outward node order) with the slot of the neighbouring cell. The lower slot of a pair
belongs to the lower-numbered cell, so it is kept (it points out of the owner); slots
without a partner are the boundary. Boundary faces take the group of the boundary facet with
the same nodes; internal faces that are facets of a ``section_*`` group form that group's face
zone. Boundary faces of one patch and one owner keep the order of their local faces.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.errors import ChanmeshError
from chanmesh.meshing.faces import CHUNK, FaceTable, face_table
from chanmesh.meshing.model import ChannelMesh, Group
from chanmesh.meshing.verify import INTERNAL_PREFIX
from chanmesh.post.facepairs import match_keys, sorted_order, three_smallest_columns


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


def _match(keys: tuple[np.ndarray, ...], facets: np.ndarray, what: str) -> tuple[np.ndarray, np.ndarray]:
    """Pair faces given by their three smallest nodes ``keys`` with facet rows ``facets``:
    (index of the face, index of the facet) for every facet, which must each be one of the faces."""
    f = three_smallest_columns([facets[:, r] for r in range(facets.shape[1])])
    n = len(keys[0])
    first, second, _ = match_keys(*(np.concatenate([k.astype(np.int64), fk.astype(np.int64)]) for k, fk in zip(keys, f)))
    face, facet = np.minimum(first, second), np.maximum(first, second) - n
    ok = (face < n) & (facet >= 0)
    if not ok.all() or len(facet) != len(facets):
        raise PolyMeshError(f"{len(facets) - int(ok.sum())} {what} facets are not faces of the mesh")
    return face, facet


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


@dataclass
class _Part:
    """Faces of one size chosen for the polyMesh: their slots in the face table, their owner,
    and the neighbour (internal) or patch index (boundary)."""

    table: FaceTable
    slots: np.ndarray
    owner: np.ndarray
    other: np.ndarray


def poly_mesh(mesh: ChannelMesh, downstream: dict[str, np.ndarray] | None = None) -> PolyMesh:
    """The polyMesh of ``mesh``. ``downstream`` maps a ``section_*`` group name to the unit
    vector its zone normal must point along (the flipMap is set per face so that it does);
    zones without one keep the owner-to-neighbour normal."""
    downstream = downstream or {}
    n_cells = mesh.n_volume_cells
    dtype = np.int32 if max(len(mesh.points), n_cells) < 2**31 - 1 else np.int64
    surface = [g for g in mesh.groups if g.dim == 2]
    sections = [g for g in surface if g.name.startswith(INTERNAL_PREFIX)]
    boundary_groups = [g for g in surface if not g.name.startswith(INTERNAL_PREFIX)]
    lut = np.full(max([g.tag for g in surface], default=0) + 1, -1, np.int64)
    for i, g in enumerate(boundary_groups):
        lut[g.tag] = i

    internal: list[_Part] = []
    boundary: list[_Part] = []
    for size in (3, 4):
        try:
            table = face_table(mesh, size)
        except ValueError as exc:  # three cells on one face
            raise PolyMeshError(str(exc)) from None
        if table is None:
            continue
        partner = table.partner
        first = np.flatnonzero(partner > np.arange(len(partner), dtype=partner.dtype))
        c1, c2 = table.owner(first), table.owner(partner[first])
        if np.any(c1 == c2):
            raise PolyMeshError("a cell has two faces on the same nodes")
        internal.append(_Part(table, first, c1, c2))  # the lower slot is in the lower cell: the owner
        del c1, c2, first
        lone = np.flatnonzero(partner < 0)
        facets, ftags = _facets_of_size(mesh, size, {g.tag for g in boundary_groups})
        if len(lone) != len(facets):
            raise PolyMeshError(f"{len(lone)} boundary faces of {size} nodes but {len(facets)} boundary facets")
        if len(facets):
            lone_nodes = table.nodes(lone)
            face, facet = _match(tuple(three_smallest_columns([lone_nodes[:, r] for r in range(size)])), facets, "boundary")
            del lone_nodes
            patch = np.empty(len(lone), np.int64)
            patch[face] = lut[ftags[facet]]
            boundary.append(_Part(table, lone, table.owner(lone), patch))

    # internal faces in upper-triangular order, then boundary faces by patch and owner
    owner_i = _cat([p.owner for p in internal])
    neigh_i = _cat([p.other for p in internal])
    order_i = _upper_triangular_order(owner_i, neigh_i, n_cells)
    owner_b = _cat([p.owner for p in boundary])
    patch_b = _cat([p.other for p in boundary])
    order_b = sorted_order(patch_b * n_cells + owner_b)
    nodes, offsets = _flat_nodes(internal + boundary, np.concatenate([order_i, order_b + len(owner_i)]), dtype)
    del internal, boundary
    owner = np.concatenate([owner_i[order_i], owner_b[order_b]])
    neighbour = neigh_i[order_i]
    del owner_i, neigh_i, owner_b, order_i, order_b

    zones = _zones(mesh, sections, offsets, nodes, len(neighbour), downstream)
    points, nodes = _compact_points(mesh.points, nodes)
    counts = np.bincount(patch_b, minlength=len(boundary_groups))
    starts = len(neighbour) + np.concatenate([[0], np.cumsum(counts)[:-1]]).astype(np.int64)
    patches = [Patch(g.name, patch_type(g), int(s), int(n)) for g, s, n in zip(boundary_groups, starts, counts)]
    return PolyMesh(points, offsets, nodes, owner, neighbour, n_cells, patches, zones)


def _upper_triangular_order(owner: np.ndarray, neighbour: np.ndarray, n_cells: int) -> np.ndarray:
    """Order of the internal faces by owner, then neighbour (a swept hexahedral mesh gives
    them in that order already: checked, then no sort)."""
    if len(owner) < 2:
        return np.arange(len(owner))
    same = owner[1:] == owner[:-1]
    if np.all((owner[1:] > owner[:-1]) | (same & (neighbour[1:] > neighbour[:-1]))):
        return np.arange(len(owner))
    return sorted_order(owner.astype(np.int64) * n_cells + neighbour)


def _cat(arrays: list[np.ndarray]) -> np.ndarray:
    return np.concatenate(arrays) if arrays else np.zeros(0, np.int64)


def _zones(mesh: ChannelMesh, sections: list[Group], offsets: np.ndarray, nodes: np.ndarray,
           n_internal: int, downstream: dict[str, np.ndarray]) -> list[Zone]:
    """A face zone per section group: the internal faces on its facets, flipped to point downstream."""
    if not sections:
        return []
    zone_faces: dict[int, list[np.ndarray]] = {g.tag: [] for g in sections}
    for size in (3, 4):
        sfacets, stags = _facets_of_size(mesh, size, set(zone_faces))
        if not len(sfacets):
            continue
        # internal faces of this size whose nodes all lie on section facets
        on = np.zeros(len(mesh.points), bool)
        on[sfacets.ravel()] = True
        sizes = np.diff(offsets[:n_internal + 1])
        rows = np.flatnonzero((sizes == size) & on[nodes[offsets[:n_internal]]])  # first node on a section
        table = nodes[offsets[rows][:, None] + np.arange(size)[None, :]]
        cand = np.flatnonzero(on[table].all(axis=1))
        keys = three_smallest_columns([table[cand, r] for r in range(size)])
        face, facet = _match(keys, sfacets, "section")
        labels = rows[cand[face]]
        for tag in zone_faces:
            zone_faces[tag].append(labels[stags[facet] == tag])
    zones = []
    for g in sections:
        faces = np.sort(np.concatenate(zone_faces[g.tag])) if zone_faces[g.tag] else np.zeros(0, np.int64)
        flip = np.zeros(len(faces), bool)
        if g.name in downstream and len(faces):
            flip = _area_vectors(mesh.points, offsets, nodes, faces) @ np.asarray(downstream[g.name], float) < 0
        zones.append(Zone(g.name, faces, flip))
    return zones


def _flat_nodes(parts: list[_Part], order: np.ndarray, dtype: type) -> tuple[np.ndarray, np.ndarray]:
    """Nodes of the chosen faces of ``parts`` (concatenated, then taken in ``order``) as one flat
    list and the offsets of each face in it."""
    sizes = np.concatenate([np.full(len(p.slots), p.table.size, np.int64) for p in parts])[order]
    offsets = np.zeros(len(sizes) + 1, np.int64)
    np.cumsum(sizes, out=offsets[1:])
    k = max(p.table.size for p in parts)
    table = np.full((len(order), k), -1, dtype)
    if len({id(p.table) for p in parts}) == 1:  # one face table: gather in the final order
        slots = np.concatenate([p.slots for p in parts])[order]
        for lo in range(0, len(slots), CHUNK):
            table[lo:lo + CHUNK] = parts[0].table.nodes(slots[lo:lo + CHUNK])
    else:
        row = 0
        for p in parts:
            for lo in range(0, len(p.slots), CHUNK):
                got = p.table.nodes(p.slots[lo:lo + CHUNK])
                table[row + lo:row + lo + len(got), :got.shape[1]] = got
            row += len(p.slots)
        table = table[order]
    flat = table.reshape(-1)
    return (flat if k == 3 or np.all(sizes == k) else flat[flat >= 0]), offsets


def _compact_points(points: np.ndarray, nodes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Drop points no face uses (OpenFOAM's checkMesh counts unused points as an error)."""
    used = np.zeros(len(points), bool)
    used[nodes] = True
    if used.all():
        return points, nodes
    remap = (np.cumsum(used) - 1).astype(nodes.dtype)
    return points[used], remap[nodes]
