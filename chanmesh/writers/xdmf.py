"""XDMF + HDF5 in the layout finite-element codes of the FEniCS family read:

* ``<stem>.xdmf`` / ``.h5``: the volume cells, with an integer cell array ``group``;
* ``<stem>_facets.xdmf`` / ``_facets.h5``: the boundary (and section) facets, same array;
* ``<stem>_groups.json``: group name -> {tag, dim}, since XDMF keeps the integers but not the
  names (meshio 5.3.5).

Blocks of one cell type are merged into one, so each file has a single topology type: meshio
writes several blocks as topology "Mixed", which dolfinx 0.5.2 refuses ("Cannot recognise cell
type. Unknown value: mixed"); a hex mesh with sections has its wall and section quads in
separate blocks. docs/fenicsx.md gives the recipe that reads the pair in dolfinx.
"""

from __future__ import annotations

import json
from pathlib import Path

import meshio
import numpy as np

from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions
from chanmesh.writers.meshio_bridge import group_table, to_meshio


def merge_blocks(m: meshio.Mesh) -> meshio.Mesh:
    """The same mesh with one block per cell type (cells in their original order within a type)."""
    order: list[str] = []
    cells: dict[str, list[np.ndarray]] = {}
    data: dict[str, dict[str, list[np.ndarray]]] = {k: {} for k in m.cell_data}
    for i, block in enumerate(m.cells):
        if block.type not in cells:
            order.append(block.type)
            cells[block.type] = []
            for k in data:
                data[k][block.type] = []
        cells[block.type].append(block.data)
        for k in data:
            data[k][block.type].append(np.asarray(m.cell_data[k][i]))
    return meshio.Mesh(
        m.points,
        [(t, _joined(cells[t])) for t in order],
        cell_data={k: [_joined(v[t]) for t in order] for k, v in data.items()},
    )


def _joined(arrays: list[np.ndarray]) -> np.ndarray:
    """One array of the pieces; a single piece as it is (a million hexahedra: 64 MB not copied)."""
    return arrays[0] if len(arrays) == 1 else np.concatenate(arrays)


def write_xdmf(mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
    cells = merge_blocks(to_meshio(mesh, facets=False))
    facets = merge_blocks(to_meshio(mesh, volumes=False))
    for m in (cells, facets):
        del m.cell_data["gmsh:physical"]
    main = folder / f"{stem}.xdmf"
    side = folder / f"{stem}_facets.xdmf"
    names = folder / f"{stem}_groups.json"
    meshio.write(main, cells, file_format="xdmf", compression="gzip", compression_opts=1)
    meshio.write(side, facets, file_format="xdmf", compression="gzip", compression_opts=1)
    names.write_text(json.dumps(group_table(mesh), indent=2) + "\n")
    return [main, folder / f"{stem}.h5", side, folder / f"{stem}_facets.h5", names]
