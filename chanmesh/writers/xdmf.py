"""XDMF + HDF5 in the layout finite-element codes of the FEniCS family read:

* ``<stem>.xdmf`` / ``.h5``: the volume cells, with an integer cell array ``group``;
* ``<stem>_facets.xdmf`` / ``_facets.h5``: the boundary (and section) facets, same array;
* ``<stem>_groups.json``: group name -> {tag, dim}, since XDMF keeps the integers but not the
  names (meshio 5.3.5).
"""

from __future__ import annotations

import json
from pathlib import Path

import meshio

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions
from chanmesh.writers.meshio_bridge import group_table, to_meshio


def write_xdmf(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    cells = to_meshio(mesh, facets=False)
    facets = to_meshio(mesh, volumes=False)
    for m in (cells, facets):
        del m.cell_data["gmsh:physical"]
    main = folder / f"{stem}.xdmf"
    side = folder / f"{stem}_facets.xdmf"
    names = folder / f"{stem}_groups.json"
    meshio.write(main, cells, file_format="xdmf", compression="gzip", compression_opts=1)
    meshio.write(side, facets, file_format="xdmf", compression="gzip", compression_opts=1)
    names.write_text(json.dumps(group_table(mesh), indent=2) + "\n")
    return [main, folder / f"{stem}.h5", side, folder / f"{stem}_facets.h5", names]
