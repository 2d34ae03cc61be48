"""Formats written by gmsh itself from a discrete model: MSH, SU2, MED, CGNS.

gmsh's own writers keep physical-group names (meshio 5.3.5's SU2 writer raises TypeError and
its MSH 4.1 writer needs per-node entity tags for mixed cells; GMSH-NOTES).
"""

from __future__ import annotations

from pathlib import Path

import gmsh

from chanmesh.gmshlayer.discrete import load_discrete
from chanmesh.gmshlayer.session import gmsh_session
from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions


def _write(mesh: ChannelMesh, path: Path, options: WriteOptions, msh: bool = False) -> list[Path]:
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
