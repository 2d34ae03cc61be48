"""Formats written through meshio's own writers (Abaqus, Medit).

meshio 5.3.5's Nastran writer fails an assertion on metre-scale coordinates (its 16-character
float field), so Nastran is not offered."""

from __future__ import annotations

from pathlib import Path

import meshio
import numpy as np

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions
from chanmesh.writers.meshio_bridge import to_meshio


def write_abaqus(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    """Abaqus input; each group becomes a named element set (ELSET)."""
    m = to_meshio(mesh)
    m.cell_data = {}
    m.cell_sets = {}
    for g in mesh.groups:
        blocks = mesh.volumes + mesh.facets
        m.cell_sets[g.name] = [np.flatnonzero(b.tags == g.tag) for b in blocks]
    path = folder / f"{stem}.inp"
    meshio.write(path, m, file_format="abaqus")
    return [path]


def write_medit(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    """Medit mesh; each element's reference is its group tag."""
    m = to_meshio(mesh)
    m.cell_data = {"medit:ref": m.cell_data["group"]}
    path = folder / f"{stem}.mesh"
    meshio.write(path, m, file_format="medit")
    return [path]
