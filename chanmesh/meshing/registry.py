"""Meshers by name (the design's ``mesh.cells``). A mesher is two functions:

* ``mesh(design, scale=1.0, progress=None) -> ChannelMesh``: the mesh, in metres; ``scale`` > 1
  refines every length scale by that factor (used by convergence families);
* ``estimate(design, scale=1.0) -> int``: volume cells expected, computed without meshing, so
  that ``mesh.max_cells`` is enforced before any work is done.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from typing import Callable

from chanmesh.design.model import Design
from chanmesh.meshing.model import ChannelMesh


@dataclass(frozen=True)
class Mesher:
    name: str
    module: str
    mesh_function: str
    estimate_function: str

    def mesh(self, design: Design, scale: float = 1.0, progress: Callable[[str], None] | None = None) -> ChannelMesh:
        return getattr(importlib.import_module(self.module), self.mesh_function)(design, scale=scale, progress=progress)

    def estimate(self, design: Design, scale: float = 1.0) -> int:
        return int(getattr(importlib.import_module(self.module), self.estimate_function)(design, scale=scale))


MESHERS: dict[str, Mesher] = {
    "tet": Mesher("tet", "chanmesh.meshing.tet_process", "mesh_tet_isolated", "estimate_tet_cells"),  # gmsh in a child
    "hex": Mesher("hex", "chanmesh.meshing.hex", "mesh_hex", "estimate_hex_cells"),
}


def mesher_for(design: Design) -> Mesher:
    return MESHERS[design.mesh.cells]
