"""Formats written by gmsh itself from a discrete model: MSH, SU2, MED, CGNS.

gmsh's own writers keep physical-group names (meshio 5.3.5's SU2 writer raises TypeError and
its MSH 4.1 writer needs per-node entity tags for mixed cells; GMSH-NOTES). The default MSH
(4.1, ASCII) is written by ``msh41`` instead: the same bytes, without loading the mesh into
gmsh (several times faster and lighter for a million cells).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from chanmesh.meshing.model import Block, ChannelMesh
from chanmesh.meshing.verify import INTERNAL_PREFIX
from chanmesh.writers import WriteOptions, msh41


def without_sections(mesh: ChannelMesh) -> ChannelMesh:
    """``mesh`` without its internal ``section_*`` surface groups (their facets dropped)."""
    drop = {g.tag for g in mesh.groups if g.dim == 2 and g.name.startswith(INTERNAL_PREFIX)}
    if not drop:
        return mesh
    facets = [Block(b.type, b.cells[~np.isin(b.tags, list(drop))], b.tags[~np.isin(b.tags, list(drop))]) for b in mesh.facets]
    return ChannelMesh(mesh.points, mesh.volumes, facets, [g for g in mesh.groups if g.tag not in drop], dict(mesh.info))


def _write(mesh: ChannelMesh, path: Path, options: WriteOptions, msh: bool = False) -> list[Path]:
    if msh and not options.msh_sections:
        mesh = without_sections(mesh)
    if msh and options.msh_version == "4.1" and not options.binary and msh41.supports(mesh):
        msh41.write_msh41(mesh, path)
        return [path]
    import gmsh  # only here: the default MSH needs no gmsh (its import costs 0.1 s and 14 MB)

    from chanmesh.gmshlayer.discrete import load_discrete
    from chanmesh.gmshlayer.session import gmsh_session

    with gmsh_session(threads=1):
        load_discrete(mesh)
        gmsh.option.setNumber("Mesh.SaveAll", 0)
        if msh:
            gmsh.option.setNumber("Mesh.MshFileVersion", float(options.msh_version))
            gmsh.option.setNumber("Mesh.Binary", 1 if options.binary else 0)
        gmsh.write(str(path))
    return [path]


def write_msh(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    return _write(mesh, folder / f"{stem}.msh", options, msh=True)


def write_su2(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    return _write(mesh, folder / f"{stem}.su2", options)


def write_med(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    return _write(mesh, folder / f"{stem}.med", options)


def write_cgns(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    return _write(mesh, folder / f"{stem}.cgns", options)
