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


def meshio_writers() -> list[str]:
    """Names of meshio's writers (its ``file_format`` values)."""
    from meshio._helpers import _writer_map

    return sorted(_writer_map)


def meshio_suffix(file_format: str) -> str | None:
    """The file suffix meshio uses for ``file_format``, or None if meshio has no such writer."""
    from meshio._helpers import extension_to_filetypes

    if file_format not in meshio_writers():
        return None
    for ext, types in extension_to_filetypes.items():
        if file_format in types:
            return ext
    return f".{file_format}"


def write_meshio(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions, file_format: str) -> list[Path]:
    """Any other writer of meshio's; the group tags go along as cell data where it keeps any.

    Returns every file the writer made (some formats write companions)."""
    from chanmesh.errors import OutputError

    before = set(folder.iterdir())
    path = folder / f"{stem}{meshio_suffix(file_format)}"
    try:
        meshio.write(path, to_meshio(mesh), file_format=file_format)
    except Exception as exc:  # meshio's writers raise many types for data they cannot hold
        raise OutputError(f"meshio's {file_format} writer cannot write this mesh: {str(exc) or type(exc).__name__}") from None
    return sorted(set(folder.iterdir()) - before)
