"""Conversion of a ``ChannelMesh`` to ``meshio.Mesh`` (cells first, then facets)."""

from __future__ import annotations

import meshio
import numpy as np

from chanmesh.meshing.model import Block, ChannelMesh


def to_meshio(mesh: ChannelMesh, volumes: bool = True, facets: bool = True, tag_name: str = "group") -> meshio.Mesh:
    """A meshio mesh of the chosen blocks, group tags as the integer cell array ``tag_name``.

    ``gmsh:physical`` carries the same tags, so meshio's readers and writers that know gmsh's
    convention keep them."""
    blocks: list[Block] = (mesh.volumes if volumes else []) + (mesh.facets if facets else [])
    cells = [(b.type, b.cells) for b in blocks]
    tags = [b.tags.astype(np.int32) for b in blocks]
    return meshio.Mesh(mesh.points, cells, cell_data={tag_name: tags, "gmsh:physical": tags})


def group_table(mesh: ChannelMesh) -> dict[str, dict[str, int]]:
    """Name -> {tag, dim}: the name map written beside formats that keep only integer tags."""
    return {g.name: {"tag": g.tag, "dim": g.dim} for g in mesh.groups}
