"""VTU (VTK XML unstructured grid): volume cells and boundary facets in one file, a 'group'
integer cell array, and the name map in the file's field data."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions
from chanmesh.writers.meshio_bridge import to_meshio


def write_vtu(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    m = to_meshio(mesh)
    del m.cell_data["gmsh:physical"]
    # field data: one entry per group, [tag, dim], as meshio stores gmsh's names
    m.field_data = {g.name: np.array([g.tag, g.dim]) for g in mesh.groups}
    path = folder / f"{stem}.vtu"
    m.write(path, binary=True, compression="zlib")
    return [path]
