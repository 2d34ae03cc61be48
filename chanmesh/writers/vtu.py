"""VTU (VTK XML unstructured grid, file format version 1.0): volume cells and boundary facets
in one file, an integer cell array ``group``, and one field-data entry per group name holding
``[tag, dim]`` (meshio 5.3.5's VTU writer drops field data).

Written here with numpy rather than through VTK: the arrays go to the file as they are, in
VTK's *appended raw* encoding (each array preceded by its byte count as UInt64), which VTK,
ParaView, pyvista and meshio read. VTK's own writer base64-encoded and compressed them, about
ten times slower at a million cells (bench/RESULTS.md); the file is larger (no compression;
connectivity as Int32 when the node count allows, which halves its largest array).

Layout reference: "VTK File Formats", VTK User's Guide (Kitware), XML formats section.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from chanmesh.meshing.model import ChannelMesh

if TYPE_CHECKING:
    from chanmesh.writers import WriteOptions

VTK_TYPE = {"tetra": 10, "hexahedron": 12, "wedge": 13, "triangle": 5, "quad": 9}
"""VTK cell type numbers (vtkCellType.h)."""

_VTK_NAME = {np.dtype(np.int32): "Int32", np.dtype(np.int64): "Int64", np.dtype(np.uint8): "UInt8",
             np.dtype(np.float64): "Float64"}
CHUNK = 1 << 18
"""Cells converted and written per batch."""


def _xml_name(name: str) -> str:
    return name.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;").replace(">", "&gt;")


class _Appended:
    """Arrays of the AppendedData section: their offsets for the header, their bytes after it."""

    def __init__(self) -> None:
        self.offset = 0
        self.writers: list = []

    def add(self, nbytes: int, write) -> int:  # type: ignore[no-untyped-def]
        at = self.offset
        self.offset += 8 + nbytes
        self.writers.append((nbytes, write))
        return at


def write_vtu(mesh: ChannelMesh, folder: Path, stem: str, options: "WriteOptions") -> list[Path]:
    path = Path(folder) / f"{stem}.vtu"
    blocks = mesh.volumes + mesh.facets
    n_cells = sum(len(b.cells) for b in blocks)
    index = np.dtype(np.int32) if len(mesh.points) < 2**31 else np.dtype(np.int64)
    n_conn = sum(b.cells.size for b in blocks)
    data = _Appended()

    def cells_out(fh) -> None:  # type: ignore[no-untyped-def]
        for b in blocks:
            for lo in range(0, len(b.cells), CHUNK):
                b.cells[lo:lo + CHUNK].astype(index).tofile(fh)

    def offsets_out(fh) -> None:  # type: ignore[no-untyped-def]
        end = 0
        for b in blocks:
            k = b.cells.shape[1]
            for lo in range(0, len(b.cells), CHUNK):
                m = min(CHUNK, len(b.cells) - lo)
                (end + k * np.arange(1, m + 1, dtype=np.int64)).tofile(fh)
                end += k * m

    def types_out(fh) -> None:  # type: ignore[no-untyped-def]
        for b in blocks:
            np.full(len(b.cells), VTK_TYPE[b.type], np.uint8).tofile(fh)

    def groups_out(fh) -> None:  # type: ignore[no-untyped-def]
        for b in blocks:
            b.tags.astype(np.int32).tofile(fh)

    field = []
    for g in mesh.groups:  # two numbers each: inline as text (meshio 5.3.5 mixes up appended field data)
        field.append(f'      <DataArray type="Int32" Name="{_xml_name(g.name)}" NumberOfTuples="2" format="ascii">{g.tag} {g.dim}</DataArray>')
    pts = data.add(mesh.points.nbytes, mesh.points.tofile)
    con = data.add(n_conn * index.itemsize, cells_out)
    off = data.add(n_cells * 8, offsets_out)
    typ = data.add(n_cells, types_out)
    grp = data.add(n_cells * 4, groups_out)
    head = "\n".join([
        '<?xml version="1.0"?>',
        '<VTKFile type="UnstructuredGrid" version="1.0" byte_order="LittleEndian" header_type="UInt64">',
        "  <UnstructuredGrid>",
        "    <FieldData>", *field, "    </FieldData>",
        f'    <Piece NumberOfPoints="{len(mesh.points)}" NumberOfCells="{n_cells}">',
        "      <Points>",
        f'        <DataArray type="Float64" NumberOfComponents="3" format="appended" offset="{pts}"/>',
        "      </Points>",
        "      <Cells>",
        f'        <DataArray type="{_VTK_NAME[index]}" Name="connectivity" format="appended" offset="{con}"/>',
        f'        <DataArray type="Int64" Name="offsets" format="appended" offset="{off}"/>',
        f'        <DataArray type="UInt8" Name="types" format="appended" offset="{typ}"/>',
        "      </Cells>",
        '      <CellData Scalars="group">',
        f'        <DataArray type="Int32" Name="group" format="appended" offset="{grp}"/>',
        "      </CellData>",
        "    </Piece>",
        "  </UnstructuredGrid>",
        '  <AppendedData encoding="raw">',
        "   _",
    ])
    with open(path, "wb") as fh:
        fh.write(head.encode())
        for nbytes, write in data.writers:
            fh.write(np.uint64(nbytes).tobytes())
            fh.flush()
            write(fh)
        fh.write(b"\n  </AppendedData>\n</VTKFile>\n")
    return [path]
