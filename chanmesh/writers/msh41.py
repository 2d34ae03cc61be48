"""MSH 4.1 ASCII from numpy: the same bytes gmsh writes for the discrete model of
``gmshlayer.discrete.load_discrete``, without building that model.

Loading 1 M hexahedra into gmsh and writing them took about 2.7 s and some 200 MB here; this
writer takes a fraction of that (bench/build_overhead.py). tests/test_msh41.py compares its
output with ``gmsh.write`` byte for byte on hexahedra (with and without section surfaces),
tetrahedra and split ends. How:

* integers become digits by table look-up, four digits at a time;
* coordinates are formatted once per distinct value with ``%.16g`` (the C format gmsh uses;
  Python's ``%`` formatting is correctly rounded, as glibc's printf is) and gathered: a swept
  mesh has few distinct values per coordinate (about 51 k x-values for 923 k nodes);
* each batch of lines is laid out in fixed-width slots (text right-aligned, separator after),
  and a mask keeps the characters.

``supports`` says when the layout is known to match gmsh's (every group has cells, at most
one volume group); ``gmsh_formats.write_msh`` falls back to gmsh otherwise.
"""

from __future__ import annotations

from pathlib import Path
from typing import BinaryIO

import numpy as np

from chanmesh.meshing.model import Block, ChannelMesh

GMSH_TYPE = {"triangle": 2, "quad": 3, "tetra": 4, "hexahedron": 5, "wedge": 6}
"""gmsh element type codes; gmsh writes an entity's element blocks in this order."""

BATCH = 1 << 15
"""Lines assembled at a time: bounds the temporaries at a few MB."""

_HIGH4 = np.frombuffer("".join(f"{i:04d}" for i in range(10_000)).encode(), np.uint32)  # four digits a word
_LOW3 = np.frombuffer("".join(f"{i:03d} " for i in range(1000)).encode(), np.uint32)  # three digits and a space
_LENGTH4 = np.array([len(str(i)) for i in range(10_000)], np.int8)


def supports(mesh: ChannelMesh) -> bool:
    """True when this writer's layout is the one gmsh would write for ``mesh``: one volume
    group, and cells in every group (gmsh's handling of the other cases is not reproduced)."""
    if sum(g.dim == 3 for g in mesh.groups) != 1:
        return False
    used: set[int] = set()
    for b in mesh.volumes + mesh.facets:
        if b.type not in GMSH_TYPE:
            return False
        used.update(np.unique(b.tags).tolist())
    return all(g.tag in used for g in mesh.groups)


def _rows(table: np.ndarray, index: np.ndarray) -> np.ndarray:
    """``table[index]`` for a (u, S) table of bytes or bools, gathered a machine word at a time
    when S allows it (numpy's gather of short byte rows is several times slower)."""
    width = table.shape[1]
    for size, word in ((8, np.uint64), (4, np.uint32)):
        if width % size == 0:
            words = np.ascontiguousarray(table).view(word)
            return words.take(index, axis=0).view(table.dtype)
    return table[index]


def _keep_table(width: int) -> np.ndarray:
    """Row n: the last n + 1 characters of a slot of ``width`` (n digits and the separator)."""
    return np.arange(width) >= width - 1 - np.arange(width)[:, None]


def _int_slots(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Non-negative integers (m, k) as slots of 4q characters each: digits right-aligned, then a
    space. Returns the characters (m, k * 4q) uint8 and which of them to keep."""
    m, k = values.shape
    top = int(values.max()) if values.size else 0
    quads = 1 + (max(0, len(str(top)) - 3) + 3) // 4  # the last word: 3 digits + the space
    rest = values.reshape(-1).astype(np.uint32 if top < 2**32 else np.uint64)
    words = np.empty((rest.size, quads), np.uint32)
    high = rest // rest.dtype.type(1000)
    low = rest - high * rest.dtype.type(1000)
    words[:, -1] = _LOW3.take(low)
    count = _LENGTH4.take(low)
    for q in range(quads - 2, -1, -1):
        rest = high
        high = rest // rest.dtype.type(10_000)
        low = rest - high * rest.dtype.type(10_000)
        words[:, q] = _HIGH4.take(low)
        np.copyto(count, _LENGTH4.take(low) + np.int8(3 + 4 * (quads - 2 - q)), where=low > 0)
    width = 4 * quads
    keep = _rows(_keep_table(width), count)
    return words.view(np.uint8).reshape(m, k * width), keep.reshape(m, k * width)


def _int_lines(values: np.ndarray, end: bytes) -> bytes:
    """Rows of integers (m, k) as text lines: each value followed by a space, the row's last
    by ``end`` (b"\n" or b" \n") instead."""
    text, keep = _int_slots(values)
    if end == b"\n":
        text[:, -1] = 10
    else:  # keep the last space and add the line end
        text = np.concatenate([text, np.full((len(text), 1), 10, np.uint8)], axis=1)
        keep = np.concatenate([keep, np.ones((len(keep), 1), bool)], axis=1)
    return text[keep].tobytes()


def _float_slots(values: np.ndarray, sep: bytes) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``%.16g`` of each distinct value (by bit pattern, so -0.0 stays "-0"), right-aligned in
    slots of a multiple of 8 characters, each ending in ``sep``: the characters (u, S), which
    of them to keep (u, S), and the distinct bit patterns, sorted (u,) int64, by which a batch
    of values finds its rows (``_row_of``; no inverse of every value is kept: 8 MB a million)."""
    bits = np.unique(np.ascontiguousarray(values, np.float64).view(np.int64))
    distinct = bits.view(np.float64)
    text = np.frombuffer(((f"%.16g{sep.decode()}" * len(distinct)) % tuple(distinct.tolist())).encode(), np.uint8)
    lengths = np.diff(np.concatenate([[-1], np.flatnonzero(text == sep[0])]))  # with the separator
    width = -(-int(lengths.max()) // 8) * 8 if len(lengths) else 8
    keep = np.arange(width) >= (width - lengths)[:, None]
    chars = np.zeros((len(distinct), width), np.uint8)
    chars[keep] = text
    return chars, keep, bits


def _row_of(bits: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Row of each value in ``_float_slots``' tables (its bit pattern among the sorted ones)."""
    return np.searchsorted(bits, np.ascontiguousarray(values, np.float64).view(np.int64))


def _g(x: float) -> str:
    return "%.16g" % x


def _entity_blocks(mesh: ChannelMesh) -> tuple[dict[int, int], list[tuple[int, int, str, list[tuple[Block, np.ndarray, int]]]]]:
    """Entity tag of each group (gmsh numbers discrete entities per dimension in creation order)
    and the element blocks in file order: (dim, entity, type, [(block, selection, first tag)]),
    with element tags given in ``load_discrete``'s order (groups, then blocks)."""
    entity: dict[int, int] = {}
    per_dim = {2: 0, 3: 0}
    for g in mesh.groups:
        per_dim[g.dim] += 1
        entity[g.tag] = per_dim[g.dim]
    pieces: dict[tuple[int, int, str], list[tuple[Block, np.ndarray, int]]] = {}
    next_tag = 1
    for g in mesh.groups:
        for b in mesh.volumes if g.dim == 3 else mesh.facets:
            sel = np.flatnonzero(b.tags == g.tag)
            if len(sel):
                pieces.setdefault((g.dim, entity[g.tag], b.type), []).append((b, sel, next_tag))
                next_tag += len(sel)
    order = sorted(pieces, key=lambda k: (k[0], k[1], GMSH_TYPE[k[2]]))
    return entity, [(d, e, t, pieces[(d, e, t)]) for d, e, t in order]


def _bounds(points: np.ndarray, blocks: list[tuple[Block, np.ndarray, int]]) -> str:
    """The entity's box as gmsh writes it: over the nodes of its elements, min then max."""
    used = np.zeros(len(points), bool)
    for b, sel, _ in blocks:
        used[b.cells if len(sel) == len(b.cells) else b.cells[sel]] = True
    lo = np.array([points[:, k][used].min() for k in range(3)])
    hi = np.array([points[:, k][used].max() for k in range(3)])
    centre = (lo + hi) * 0.5  # gmsh scales the box about its centre by the unit factor,
    lo, hi = (lo - centre) + centre, (hi - centre) + centre  # which can move it by an ulp
    return " ".join(_g(x) for x in (*lo, *hi))


def _write_nodes(f: BinaryIO, points: np.ndarray) -> None:
    n = len(points)
    for lo in range(0, n, BATCH * 4):
        f.write(_int_lines(np.arange(lo + 1, min(lo + BATCH * 4, n) + 1)[:, None], b"\n"))
    tables = [_float_slots(points[:, k], sep) for k, sep in enumerate((b" ", b" ", b"\n"))]
    for lo in range(0, n, BATCH):
        rows = [_row_of(bits, points[lo:lo + BATCH, k]) for k, (_, _, bits) in enumerate(tables)]
        text = np.concatenate([_rows(chars, r) for (chars, _, _), r in zip(tables, rows)], axis=1)
        keep = np.concatenate([_rows(kept, r) for (_, kept, _), r in zip(tables, rows)], axis=1)
        f.write(text[keep].tobytes())


def _write_elements(f: BinaryIO, blocks: list[tuple[Block, np.ndarray, int]]) -> None:
    for b, sel, first in blocks:
        for lo in range(0, len(sel), BATCH):
            rows = sel[lo:lo + BATCH]
            line = np.empty((len(rows), b.cells.shape[1] + 1), np.int64)
            line[:, 0] = np.arange(first + lo, first + lo + len(rows))
            np.add(b.cells[rows], 1, out=line[:, 1:])
            f.write(_int_lines(line, b" \n"))


def write_msh41(mesh: ChannelMesh, path: Path) -> None:
    """Write ``mesh`` as MSH 4.1 ASCII (coordinates in metres, as stored) to ``path``.
    Only for meshes ``supports`` accepts."""
    if not supports(mesh):
        raise ValueError("this mesh needs gmsh's own MSH writer (an empty group, or several volume groups)")
    entity, blocks = _entity_blocks(mesh)
    by_entity: dict[tuple[int, int], list[tuple[Block, np.ndarray, int]]] = {}
    for dim, ent, _, pieces in blocks:
        by_entity.setdefault((dim, ent), []).extend(pieces)
    groups = sorted(mesh.groups, key=lambda g: (g.dim, entity[g.tag]))
    n_nodes = len(mesh.points)
    n_elements = sum(len(sel) for *_, pieces in blocks for _, sel, _ in pieces)
    volume = next(g for g in mesh.groups if g.dim == 3)
    with open(path, "wb") as f:
        head = ["$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$PhysicalNames\n", f"{len(mesh.groups)}\n"]
        head += [f'{g.dim} {g.tag} "{g.name}"\n' for g in sorted(mesh.groups, key=lambda g: (g.dim, g.tag))]
        head += ["$EndPhysicalNames\n$Entities\n"]
        head += [f"0 0 {sum(g.dim == 2 for g in groups)} {sum(g.dim == 3 for g in groups)}\n"]
        head += [f"{entity[g.tag]} {_bounds(mesh.points, by_entity[(g.dim, entity[g.tag])])} 1 {g.tag} 0 \n" for g in groups]
        head += ["$EndEntities\n$Nodes\n", f"{len(groups)} {n_nodes} 1 {n_nodes}\n"]
        head += [f"{g.dim} {entity[g.tag]} 0 {n_nodes if g is volume else 0}\n" for g in groups]
        f.write("".join(head).encode())
        _write_nodes(f, mesh.points)
        f.write(f"$EndNodes\n$Elements\n{len(blocks)} {n_elements} 1 {n_elements}\n".encode())
        for dim, ent, ftype, pieces in blocks:
            f.write(f"{dim} {ent} {GMSH_TYPE[ftype]} {sum(len(sel) for _, sel, _ in pieces)}\n".encode())
            _write_elements(f, pieces)
        f.write(b"$EndElements\n")
