"""Read a mesh file written by chanmesh (or anything meshio reads) back into a ``ChannelMesh``.

Group tags come from the ``gmsh:physical`` cell data (MSH), else from the first integer cell
data array (XDMF, VTU); names from meshio's ``field_data`` when the format keeps them.
Facets or cells with no tag get a group of their own, so the mesh is always complete.
"""

from __future__ import annotations

import contextlib
import io
from pathlib import Path

import numpy as np

from chanmesh.errors import MeshFileError
from chanmesh.meshing.model import FACET_TYPES, VOLUME_TYPES, Block, ChannelMesh, Group

UNTAGGED = {3: "volume", 2: "boundary"}


def _tag_arrays(mesh) -> list[np.ndarray] | None:  # type: ignore[no-untyped-def]
    data = mesh.cell_data
    keys = ["gmsh:physical"] + sorted(k for k in data if k != "gmsh:physical")
    for k in keys:
        arrays = data.get(k)
        if arrays and all(np.issubdtype(np.asarray(a).dtype, np.integer) for a in arrays):
            return [np.asarray(a).reshape(-1) for a in arrays]
    return None


def _with_xdmf_companions(p: Path, m, tags, names):  # type: ignore[no-untyped-def]
    """chanmesh writes XDMF as a pair (``<stem>.xdmf`` cells, ``<stem>_facets.xdmf`` facets) with
    the names in ``<stem>_groups.json``; when those files sit beside ``p``, read them too."""
    import json

    import meshio

    facets_path = p.with_name(f"{p.stem}_facets.xdmf")
    names_path = p.with_name(f"{p.stem}_groups.json")
    if p.suffix != ".xdmf" or not facets_path.is_file() or tags is None:
        return m, tags, names
    try:
        f = meshio.read(str(facets_path))
        table = json.loads(names_path.read_text()) if names_path.is_file() else {}
    except (Exception, SystemExit):  # a broken companion: fall back to the cells alone
        return m, tags, names
    ftags = _tag_arrays(f)
    if ftags is None or len(f.points) != len(m.points):
        return m, tags, names
    merged = meshio.Mesh(m.points, list(m.cells) + list(f.cells))
    names = {**names, **{int(v["tag"]): (k, int(v["dim"])) for k, v in table.items()}}
    return merged, tags + ftags, names


def read_mesh_file(path: str | Path) -> ChannelMesh:
    """Volume cells, boundary facets and named groups of a mesh file (points in file units)."""
    import meshio

    p = Path(path)
    if not p.is_file():
        what = "is a folder" if p.is_dir() else "does not exist"
        raise MeshFileError(f"mesh file '{p}' {what} (give the path of a .msh, .xdmf, .vtu, ... file)")
    said = io.StringIO()
    try:
        with contextlib.redirect_stderr(said):
            m = meshio.read(str(p))
    except (Exception, SystemExit) as exc:  # meshio raises many types, and exits on some files
        why = " ".join(said.getvalue().split()) or str(exc) or type(exc).__name__
        raise MeshFileError(f"mesh file '{p}' cannot be read as a mesh: {why}") from None
    tags = _tag_arrays(m)
    names = {int(v[0]): (name, int(v[1]) if len(v) > 1 else None) for name, v in (m.field_data or {}).items()}
    m, tags, names = _with_xdmf_companions(p, m, tags, names)
    points = np.asarray(m.points, dtype=float)
    if points.shape[1] == 2:
        points = np.column_stack([points, np.zeros(len(points))])
    vols: list[Block] = []
    facs: list[Block] = []
    for q, block in enumerate(m.cells):
        dim = 3 if block.type in VOLUME_TYPES else 2 if block.type in FACET_TYPES else None
        if dim is None:
            continue
        t = tags[q] if tags is not None else np.full(len(block.data), -dim, np.int64)
        (vols if dim == 3 else facs).append(Block(block.type, block.data, t.astype(np.int64)))
    if not vols:
        raise MeshFileError(
            f"mesh file '{p}' holds no volume cells (tetrahedra, hexahedra or wedges); found {[b.type for b in m.cells]}"
        )
    groups: dict[int, Group] = {}
    for dim, blocks in ((3, vols), (2, facs)):
        for b in blocks:
            for tag in np.unique(b.tags).tolist():
                if tag in groups:
                    continue
                name, _ = names.get(tag, (None, None))
                groups[tag] = Group(name or (UNTAGGED[dim] if tag < 0 else f"group_{tag}"), dim, int(tag))
    unique_names: dict[str, int] = {}
    for tag, g in sorted(groups.items()):
        if g.name in unique_names:  # one name on two tags (e.g. XDMF re-numbering): keep both apart
            groups[tag] = Group(f"{g.name}_{tag}", g.dim, tag)
        unique_names[groups[tag].name] = tag
    return ChannelMesh(points, vols, facs, sorted(groups.values(), key=lambda g: g.tag))
