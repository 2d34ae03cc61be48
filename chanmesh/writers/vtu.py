"""VTU (VTK XML unstructured grid), written by VTK itself through pyvista: volume cells and
boundary facets in one file, an integer cell array ``group``, and one field-data entry per
group name holding ``[tag, dim]`` (meshio 5.3.5's VTU writer drops field data)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyvista as pv

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions

VTK_TYPE = {"tetra": pv.CellType.TETRA, "hexahedron": pv.CellType.HEXAHEDRON, "wedge": pv.CellType.WEDGE,
            "triangle": pv.CellType.TRIANGLE, "quad": pv.CellType.QUAD}


def to_pyvista(mesh: ChannelMesh) -> pv.UnstructuredGrid:
    """One unstructured grid of every block (cells, then facets), with the ``group`` array."""
    blocks = mesh.volumes + mesh.facets
    cells = np.concatenate([np.column_stack([np.full(len(b.cells), b.cells.shape[1]), b.cells]).ravel() for b in blocks])
    types = np.concatenate([np.full(len(b.cells), VTK_TYPE[b.type], dtype=np.uint8) for b in blocks])
    grid = pv.UnstructuredGrid(cells, types, mesh.points)
    grid.cell_data["group"] = np.concatenate([b.tags for b in blocks]).astype(np.int32)
    for g in mesh.groups:
        grid.field_data[g.name] = np.array([g.tag, g.dim], dtype=np.int32)
    return grid


def write_vtu(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    path = folder / f"{stem}.vtu"
    to_pyvista(mesh).save(path, binary=True)
    return [path]
