"""Write a ChannelMesh through chanmesh's own writers, for tests that read files back."""

from __future__ import annotations

from pathlib import Path

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import FORMATS, WriteOptions


def write_mesh_file(mesh: ChannelMesh, path: Path) -> Path:
    """Write ``mesh`` as ``path`` (format from the suffix: .msh as MSH 2.2, .vtu, .xdmf)."""
    fmt = FORMATS[path.suffix.lstrip(".")]
    options = WriteOptions(msh_version="2.2") if path.suffix == ".msh" else WriteOptions()
    written = fmt.write(mesh, path.parent, path.stem, options)
    return written[0]
