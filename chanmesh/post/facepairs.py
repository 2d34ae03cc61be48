"""Pair the faces of volume cells by their nodes, without sorting.

A conforming mesh's face is identified by its three smallest node indices. Sorting millions
of such keys is slow (numpy's sorts took 10-25 s for 14 M structured-mesh keys here), so the
faces go into an open-addressing hash table built in vectorised rounds instead:

    round: every unplaced face writes itself into its slot if the slot is empty (one writer
    wins); a face that finds its own key in its slot is paired with the face there; a face
    that finds another key moves to the next slot.

Two faces with the same key follow the same probe sequence, so they always meet.
"""

from __future__ import annotations

import numpy as np

_MIX = (np.uint64(0x9E3779B97F4A7C15), np.uint64(0xC2B2AE3D27D4EB4F), np.uint64(0x165667B19E3779F9))


def three_smallest(faces: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The three smallest node indices of each face (m, 3 or 4), in order; a sorting network on
    columns, much faster than np.sort along a short axis."""
    return three_smallest_columns([faces[:, i] for i in range(faces.shape[1])])


def three_smallest_columns(cols: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``three_smallest`` of a face list given as its 3 or 4 node columns (contiguous is faster)."""
    cols = list(cols)
    pairs = [(0, 1), (1, 2), (0, 1)] if len(cols) == 3 else [(0, 1), (2, 3), (0, 2), (1, 3), (1, 2)]
    for i, j in pairs:
        cols[i], cols[j] = np.minimum(cols[i], cols[j]), np.maximum(cols[i], cols[j])
    return cols[0], cols[1], cols[2]


def pair_faces(faces: np.ndarray) -> np.ndarray:
    """For each face (m, k), the index of the other face with the same nodes, or -1.

    Raises ``ValueError`` if three faces share their nodes (a non-manifold mesh)."""
    a, b, c = three_smallest(np.asarray(faces, dtype=np.int64))
    m = len(a)
    bits = max(4, int(np.ceil(np.log2(max(2 * m, 2)))))
    size = 1 << bits
    with np.errstate(over="ignore"):
        h = (a.astype(np.uint64) * _MIX[0]) ^ (b.astype(np.uint64) * _MIX[1]) ^ (c.astype(np.uint64) * _MIX[2])
    slot = (h >> np.uint64(64 - bits)).astype(np.int64)
    table = np.full(size, -1, np.int64)
    partner = np.full(m, -1, np.int64)
    todo = np.arange(m, dtype=np.int64)
    while len(todo):
        s = slot[todo]
        empty = table[s] < 0
        table[s[empty]] = todo[empty]
        owner = table[s]
        placed = owner == todo
        same = ~placed & (a[owner] == a[todo]) & (b[owner] == b[todo]) & (c[owner] == c[todo])
        found, there = todo[same], owner[same]
        partner[found], partner[there] = there, found
        if np.any(partner[there] != found):  # two faces found the same third one
            raise ValueError("three or more cells share a face: the mesh is not manifold")
        todo = todo[~placed & ~same]
        slot[todo] = (slot[todo] + 1) & (size - 1)
    return partner


def sorted_order(keys: np.ndarray) -> np.ndarray:
    """``np.argsort(keys, kind="stable")`` for non-negative integer keys, faster when it can be.

    numpy sorts plain values several times faster than it argsorts them (measured here: 0.1 s
    against 1.5 s for 6 M int64), so when ``max(keys) * len(keys)`` fits in 63 bits the index
    is packed under the key and the packed values are sorted; otherwise ``np.argsort``.
    """
    keys = np.asarray(keys, dtype=np.int64)
    n = len(keys)
    if n == 0:
        return np.zeros(0, np.int64)
    top = int(keys.max()) + 1
    if int(keys.min()) < 0 or top * n >= 1 << 63:
        return np.argsort(keys, kind="stable")
    packed = np.sort(keys * n + np.arange(n, dtype=np.int64))
    return packed % n


def pair_faces_sorted(faces: np.ndarray) -> np.ndarray:
    """Same answer as ``pair_faces`` (partner index or -1), by sorting instead of probing."""
    return pair_keys(*three_smallest(np.asarray(faces, dtype=np.int64)))


def pair_keys(a: np.ndarray, b: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Partner of each face given its three smallest nodes ``a < b < c`` (m,), or -1.

    Each face gets a 40-bit hash of (a, b, c) with its index packed below it, and the packed
    values are sorted (a plain value sort, several times faster in numpy than an argsort): faces
    with equal nodes become neighbours. A run of two whose nodes really agree is a pair; a run
    of one is a face without partner; the rare rest (hash collisions, non-manifold faces) goes
    to ``pair_faces``, which is exact and raises on a non-manifold mesh.
    """
    m = len(a)
    if m == 0:
        return np.zeros(0, np.int64)
    if m >= 1 << 23:  # the index no longer fits below a 40-bit hash
        return pair_faces(np.stack([a, b, c], axis=1))
    with np.errstate(over="ignore"):
        h = a.astype(np.uint64) * _MIX[0]
        h ^= b.astype(np.uint64) * _MIX[1]
        h ^= c.astype(np.uint64) * _MIX[2]
    h >>= np.uint64(24)  # 40 bits
    packed = h.view(np.int64)
    packed <<= 23
    packed |= np.arange(m, dtype=np.int64)
    packed.sort()
    idx = packed & ((1 << 23) - 1)
    packed >>= 23
    start = np.ones(m, bool)
    np.not_equal(packed[1:], packed[:-1], out=start[1:])
    del packed, h
    bounds = np.flatnonzero(np.append(start, True))
    run_len = np.diff(bounds)
    first = bounds[:-1]
    partner = np.full(m, -1, np.int64)
    two = first[run_len == 2]
    i, j = idx[two], idx[two + 1]
    real = (a[i] == a[j]) & (b[i] == b[j]) & (c[i] == c[j])
    partner[i[real]], partner[j[real]] = j[real], i[real]
    many = np.flatnonzero(np.repeat(run_len > 2, run_len))
    odd = np.concatenate([i[~real], j[~real], idx[many]])
    if len(odd):
        sub = pair_faces(np.stack([a[odd], b[odd], c[odd]], axis=1))
        hit = sub >= 0
        partner[odd[hit]] = odd[sub[hit]]
    return partner
