"""Every face of every volume cell, paired with the face of the neighbouring cell, in linear time.

A face *slot* is one (cell, local face) pair; two slots are the same face when their node sets
are equal. The tagging check (``verify``) and the quality figures (``post.quality``) both need
this pairing, so it is made once per mesh and kept (``face_table``).

How (no argsort, no int64 copies of the cell arrays):

1. each slot gets a 64-bit hash of its sorted nodes; the hash's top bits and the slot number
   share one int64 key, which one in-place ``ndarray.sort`` orders (numpy's SIMD sort: about
   0.3 s for 7 M keys here, against 2 s for an argsort);
2. neighbours in that order with equal hash bits are candidate pairs; a candidate pair whose
   sorted nodes are equal is a face shared by two cells (exact comparison, no trust in the
   hash);
3. the few slots left over (hash bits shared by three or more slots, or by unequal faces) are
   paired exactly by ``post.facepairs.pair_faces``.

A slot whose hash bits no other slot has cannot have a partner: it is a boundary face.

A mesh of the hexahedral mesher carries its grid (``ChannelMesh.sweep``); its faces are paired
from the grid indices instead, once its cells are proven to be the grid's
(``meshing.sweep_grid``): same answer, no hashing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.sweep_grid import proven_grid, sweep_partner

FACES = {
    "tetra": ([[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]], []),
    "hexahedron": ([], [[0, 3, 2, 1], [4, 5, 6, 7], [0, 1, 5, 4], [1, 2, 6, 5], [2, 3, 7, 6], [3, 0, 4, 7]]),
    "wedge": ([[0, 2, 1], [3, 4, 5]], [[0, 1, 4, 3], [1, 2, 5, 4], [2, 0, 3, 5]]),
}
"""Local faces of each volume cell type, outward node order (triangles, quads)."""

CHUNK = 1 << 18
"""Cells, or candidate pairs, handled per batch when nodes are gathered: bounds the
temporaries at a few tens of MB (1 << 20 cost 150 MB more at 1 M hexahedra, no time saved)."""

_MIX = (np.uint64(0x9E3779B97F4A7C15), np.uint64(0xC2B2AE3D27D4EB4F),
        np.uint64(0x165667B19E3779F9), np.uint64(0xD6E8FEB86659FD93))


def sorted_columns(faces: np.ndarray) -> list[np.ndarray]:
    """The node columns of faces (m, 3 or 4) sorted within each face (a sorting network on
    columns, much faster than ``np.sort`` along a short axis)."""
    cols = [faces[:, i] for i in range(faces.shape[1])]
    pairs = [(0, 1), (1, 2), (0, 1)] if len(cols) == 3 else [(0, 1), (2, 3), (0, 2), (1, 3), (1, 2)]
    for i, j in pairs:
        cols[i], cols[j] = np.minimum(cols[i], cols[j]), np.maximum(cols[i], cols[j])
    return cols


def face_hash(cols: list[np.ndarray]) -> np.ndarray:
    """64-bit hash (uint64) of faces given as sorted node columns."""
    with np.errstate(over="ignore"):
        h = np.zeros(len(cols[0]), np.uint64)
        for c, mix in zip(cols, _MIX):
            h ^= c.astype(np.uint64) * mix
            h ^= h >> np.uint64(29)
            h *= _MIX[0]
    return h


@dataclass
class _Part:
    start: int  # first slot
    cells: np.ndarray  # (m, k) the block's cells
    local: np.ndarray  # (L, size) local faces
    first_cell: int  # global index of the block's first cell

    @property
    def local32(self) -> np.ndarray:
        return self.local.astype(np.int32)

    @property
    def stop(self) -> int:
        return self.start + len(self.cells) * len(self.local)


@dataclass
class FaceTable:
    """Slots of the faces of one size (3 or 4 nodes) and their partners.

    ``partner[s]`` is the slot of the same face in the neighbouring cell, or -1 on the
    boundary. ``nodes(s)`` gives the face's nodes in its cell's outward order and ``owner(s)``
    the global index of its cell (cells numbered through ``mesh.volumes`` in order)."""

    size: int
    parts: list[_Part]
    partner: np.ndarray
    boundary_tags: tuple[list[np.ndarray], np.ndarray] | None = None
    """Set by the tagging check (``verify``): the facet blocks' cell and tag arrays it read, and
    the group tag of every boundary slot in slot order; valid while the mesh's facet arrays are
    those same objects (a block given new cells or new tags drops it)."""

    def tags_of_boundary(self, mesh: ChannelMesh) -> np.ndarray | None:
        """Group tag of every boundary slot (slot order), if the check found them for the
        mesh's present facets, else None."""
        if self.boundary_tags is None:
            return None
        arrays, tags = self.boundary_tags
        now = [a for b in mesh.facets for a in (b.cells, b.tags)]
        same = len(arrays) == len(now) and all(x is y for x, y in zip(arrays, now))
        return tags if same else None

    def _locate(self, slots: np.ndarray) -> list[tuple[_Part, np.ndarray | None]]:
        """The parts ``slots`` fall in, each with the positions that do (None: all of them)."""
        if len(self.parts) == 1:
            return [(self.parts[0], None)]
        out = []
        for part in self.parts:
            sel = np.flatnonzero((slots >= part.start) & (slots < part.stop))
            if len(sel):
                out.append((part, sel))
        return out

    def nodes(self, slots: np.ndarray) -> np.ndarray:
        slots = np.asarray(slots)
        res = np.empty((len(slots), self.size), np.int64)
        for part, sel in self._locate(slots):
            rel = (slots if sel is None else slots[sel]) - part.start
            rel = rel.astype(np.int32 if part.stop < 2**31 else np.int64)  # int32 division is several times faster
            cell = rel // rel.dtype.type(len(part.local))
            face = rel - cell * rel.dtype.type(len(part.local))
            flat = cell.astype(np.int64 if part.cells.size >= 2**31 else np.int32) * part.cells.shape[1]
            got = part.cells.reshape(-1).take(flat[:, None] + part.local32[face])
            if sel is None:
                res = got
            else:
                res[sel] = got
        return res

    def owner(self, slots: np.ndarray) -> np.ndarray:
        slots = np.asarray(slots, np.int64)
        res = np.empty(len(slots), np.int64)
        for part, sel in self._locate(slots):
            if sel is None:
                res = part.first_cell + (slots - part.start) // len(part.local)
            else:
                res[sel] = part.first_cell + (slots[sel] - part.start) // len(part.local)
        return res


def _parts(mesh: ChannelMesh, size: int) -> list[_Part]:
    parts, start, first = [], 0, 0
    for b in mesh.volumes:
        local = FACES[b.type][0 if size == 3 else 1]
        if local:
            parts.append(_Part(start, b.cells, np.array(local, np.int64), first))
            start = parts[-1].stop
        first += len(b.cells)
    return parts


def _slot_keys(table: FaceTable, n: int, bits: int) -> np.ndarray:
    """Every slot's key: its face's hash bits above, the slot number in the low ``bits``."""
    keys = np.empty(n, np.int64)
    for part in table.parts:
        L = len(part.local)
        view = keys[part.start:part.stop].reshape(-1, L)
        for lo in range(0, len(part.cells), CHUNK):
            cells = part.cells[lo:lo + CHUNK]
            slots = part.start + (lo + np.arange(len(cells), dtype=np.int64)) * L
            for f, local in enumerate(part.local):
                h = face_hash(sorted_columns(cells[:, local]))
                view[lo:lo + len(cells), f] = ((h >> np.uint64(bits + 1)) << np.uint64(bits)).view(np.int64) | (slots + f)
    return keys


def _pair(table: FaceTable, n: int) -> np.ndarray:
    """Partner of every slot (see the module docstring); int32 when the slots allow it."""
    from chanmesh.post.facepairs import pair_faces

    bits = max(1, int(n - 1).bit_length())
    index = np.int32 if n < 2**31 else np.int64
    keys = _slot_keys(table, n, bits)
    keys.sort()
    slot = np.empty(n, index)
    for lo in range(0, n, CHUNK * 4):  # in batches: no second n-long int64 array
        np.bitwise_and(keys[lo:lo + CHUNK * 4], np.int64((1 << bits) - 1), out=slot[lo:lo + CHUNK * 4], casting="unsafe")
    keys >>= np.int64(bits)  # the hash bits only
    same = keys[1:] == keys[:-1]
    del keys
    partner = np.full(n, -1, index)
    before = np.concatenate([[False], same[:-1]])
    after = np.concatenate([same[1:], [False]])
    in_long_run = np.flatnonzero(same & (before | after))  # three or more equal hashes
    hard = [slot[in_long_run], slot[in_long_run + 1]]
    pair_at = np.flatnonzero(same & ~before & ~after)  # exactly two: candidates (i, i + 1)
    del before, after, same
    # candidate pairs ordered by their first slot, so that the node gathers below walk the
    # cell arrays forwards (in hash order they jump about: several times slower)
    lower = slot[pair_at]
    other = slot[pair_at + 1]
    del pair_at, slot
    upper = np.maximum(lower, other)
    np.minimum(lower, other, out=lower)
    del other
    if index is np.int32:  # both slots in one int64, sorted as plain values
        packed = lower.astype(np.int64)
        packed <<= np.int64(32)
        packed |= upper
        packed.sort()
        np.right_shift(packed, np.int64(32), out=lower, casting="unsafe")
        np.bitwise_and(packed, np.int64(0xFFFFFFFF), out=upper, casting="unsafe")
        del packed
    else:
        order = np.argsort(lower)
        lower, upper = lower[order], upper[order]
    for lo in range(0, len(lower), CHUNK):
        a, b = lower[lo:lo + CHUNK], upper[lo:lo + CHUNK]
        na, nb = sorted_columns(table.nodes(a)), sorted_columns(table.nodes(b))
        equal = np.logical_and.reduce([x == y for x, y in zip(na, nb)])
        partner[a[equal]], partner[b[equal]] = b[equal], a[equal]
        hard += [a[~equal], b[~equal]]
    rest = np.unique(np.concatenate(hard)).astype(np.int64)
    if len(rest):
        sub = pair_faces(table.nodes(rest))  # exact; raises ValueError if not manifold
        found = sub >= 0
        partner[rest[found]] = rest[sub[found]]
    return partner


def face_table(mesh: ChannelMesh, size: int) -> FaceTable | None:
    """The paired faces of ``size`` nodes of ``mesh`` (None if its cells have none), made once
    and kept on the mesh (``forget_face_tables`` frees them) while its cell arrays stay the
    same objects. Raises ``ValueError`` if three or more cells share a face (non-manifold)."""
    cache = mesh.__dict__.setdefault("_face_tables", {})
    arrays = [b.cells for b in mesh.volumes]
    hit = cache.get(size)
    if hit is not None and len(hit[0]) == len(arrays) and all(x is y for x, y in zip(hit[0], arrays)):
        return hit[1]
    parts = _parts(mesh, size)
    n = parts[-1].stop if parts else 0
    table = None
    if n:
        table = FaceTable(size, parts, np.empty(0, np.int64))
        partner = None
        grid = proven_grid(mesh) if size == 4 else None
        if grid is not None:
            partner = sweep_partner(grid, arrays[0], proven=True)
        table.partner = _pair(table, n) if partner is None else partner
    cache[size] = (arrays, table)
    return table


def forget_face_tables(mesh: ChannelMesh) -> None:
    """Free the face tables kept on ``mesh`` (the build does once checks and quality are done)."""
    mesh.__dict__.pop("_face_tables", None)
