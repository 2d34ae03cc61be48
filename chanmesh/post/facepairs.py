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
    """Partner of each face given its three smallest nodes ``a < b < c`` (m,), or -1."""
    first, second, _ = match_keys(a, b, c)
    partner = np.full(len(a), -1, np.int64)
    partner[first], partner[second] = second, first
    return partner


def match_keys(a: np.ndarray, b: np.ndarray, c: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Faces paired by their three smallest nodes ``a < b < c`` (m,): (first, second, lone),
    the indices of the two faces of every pair and of the faces without partner.

    Each face gets a hash of (a, b, c) with its index packed below it in one int64, and the
    packed values are sorted (a plain value sort, several times faster in numpy than an
    argsort): faces with equal nodes become neighbours. A run of two whose nodes really agree
    is a pair; a run of one is a lone face; the rare rest (hash collisions, non-manifold faces)
    goes to ``pair_faces``, which is exact and raises on a non-manifold mesh.
    """
    m = len(a)
    index_bits = max(1, (m - 1).bit_length())
    hash_bits = 63 - index_bits
    if hash_bits < 24:  # too many faces for a useful hash beside the index
        partner = pair_faces(np.stack([a, b, c], axis=1))
        first = np.flatnonzero(partner > np.arange(m))
        return first, partner[first], np.flatnonzero(partner < 0)
    with np.errstate(over="ignore"):  # in place: two 8-byte arrays at most
        h = a.astype(np.uint64)
        h *= _MIX[0]
        t = b.astype(np.uint64)
        t *= _MIX[1]
        h ^= t
        np.copyto(t, c, casting="unsafe")
        t *= _MIX[2]
        h ^= t
        del t
    h >>= np.uint64(64 - hash_bits)
    packed = h.view(np.int64)
    del h
    packed <<= index_bits
    packed |= np.arange(m, dtype=np.int64)
    packed.sort()
    idx = (packed & ((1 << index_bits) - 1)).astype(np.int32 if m < 2**31 else np.int64)
    packed >>= index_bits
    same = packed[1:] == packed[:-1]  # same[k]: sorted faces k and k + 1 share a hash
    del packed
    if not np.any(same[1:] & same[:-1]):  # runs of one or two only (the usual case)
        head = np.flatnonzero(same)
        i, j = idx[head], idx[head + 1]
        in_pair = np.zeros(m, bool)
        in_pair[head] = True
        in_pair[head + 1] = True
        lone = idx[~in_pair]
        del in_pair, head
        real = (a[i] == a[j]) & (b[i] == b[j]) & (c[i] == c[j])
        if real.all():
            return i, j, lone
        odd = np.concatenate([i[~real], j[~real]])
        i, j = i[real], j[real]
    else:  # a hash shared by three or more faces: sort that out exactly below
        start = np.ones(m + 1, bool)
        start[1:m] = ~same
        bounds = np.flatnonzero(start)
        run_len = np.diff(bounds)
        head = bounds[:-1]
        lone = idx[head[run_len == 1]]
        two = head[run_len == 2]
        i, j = idx[two], idx[two + 1]
        real = (a[i] == a[j]) & (b[i] == b[j]) & (c[i] == c[j])
        many = idx[np.flatnonzero(np.repeat(run_len > 2, run_len))]
        odd = np.concatenate([i[~real], j[~real], many])
        i, j = i[real], j[real]
    sub = pair_faces(np.stack([a[odd], b[odd], c[odd]], axis=1))
    pairs = np.flatnonzero(sub > np.arange(len(odd)))
    return (np.concatenate([i, odd[pairs]]), np.concatenate([j, odd[sub[pairs]]]),
            np.concatenate([lone, odd[sub < 0]]))
