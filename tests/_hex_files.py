"""Write a ChannelMesh with meshio directly, for tests that need a file before the project's
writers are merged (the lead switches these to chanmesh's writers)."""

from __future__ import annotations

from pathlib import Path

import meshio
import numpy as np

from chanmesh.meshing.model import ChannelMesh


def write_with_meshio(mesh: ChannelMesh, path: Path) -> Path:
    blocks = mesh.volumes + mesh.facets
    cells = [(b.type, b.cells) for b in blocks]
    if path.suffix == ".msh":
        data = {"gmsh:physical": [b.tags for b in blocks], "gmsh:geometrical": [b.tags for b in blocks]}
        fields = {g.name: np.array([g.tag, g.dim]) for g in mesh.groups}
        meshio.Mesh(mesh.points, cells, cell_data=data, field_data=fields).write(path, file_format="gmsh22", binary=True)
    else:
        meshio.Mesh(mesh.points, cells, cell_data={"chanmesh:group": [b.tags for b in blocks]}).write(path)
    return path
