"""Load a ``ChannelMesh`` into gmsh as discrete entities, so gmsh's own writers can save it.

One discrete volume per volume group and one discrete surface per surface group, each its own
named physical group; this is how MSH, SU2, MED and CGNS keep the group names. Loading is
most of the cost (1 M hexahedra: about 2.5 s to load and write MSH 4.1 ASCII, bench/RESULTS.md),
so the default MSH 4.1 ASCII is written by ``writers.msh41`` in numpy instead (the same bytes).
"""

from __future__ import annotations

import gmsh
import numpy as np

from chanmesh.meshing.model import ChannelMesh

GMSH_TYPE = {"tetra": 4, "hexahedron": 5, "wedge": 6, "triangle": 2, "quad": 3}


def load_discrete(mesh: ChannelMesh) -> None:
    """Fill the current (empty) gmsh model with ``mesh``; coordinates stay in metres."""
    entities: dict[int, int] = {}
    for g in mesh.groups:
        entities[g.tag] = gmsh.model.addDiscreteEntity(g.dim)
    first_volume = next(entities[g.tag] for g in mesh.groups if g.dim == 3)
    node_tags = np.arange(1, len(mesh.points) + 1, dtype=np.uint64)
    gmsh.model.mesh.addNodes(3, first_volume, node_tags, mesh.points.ravel())
    next_tag = 1
    for g in mesh.groups:
        blocks = mesh.volumes if g.dim == 3 else mesh.facets
        for b in blocks:
            sel = b.cells[b.tags == g.tag]
            if not len(sel):
                continue
            tags = np.arange(next_tag, next_tag + len(sel), dtype=np.uint64)
            next_tag += len(sel)
            gmsh.model.mesh.addElementsByType(entities[g.tag], GMSH_TYPE[b.type], tags, (sel + 1).astype(np.uint64).ravel())
        gmsh.model.addPhysicalGroup(g.dim, [entities[g.tag]], tag=g.tag, name=g.name)
