"""Output formats by name. A mesh writer is a function ``write(mesh, folder, stem, options) ->
list[Path]`` that writes ``folder/stem.<suffix>`` (and any companion files) and returns the
paths. A fabrication writer (``source = "design"``) has the same shape but takes the design
instead of the mesh: STEP, STL, mould and DXF are made from the exact solid, not the cells. The build writes into a staging folder and renames the results into place, so writers
need not be atomic themselves. Add a format by adding a module and an entry here.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Callable

if TYPE_CHECKING:  # the registry stays light: the command line reads it for --help
    from chanmesh.design.model import Design
    from chanmesh.meshing.model import ChannelMesh


@dataclass(frozen=True)
class WriteOptions:
    msh_version: str = "4.1"  # "4.1" | "2.2"
    binary: bool = False
    msh_sections: bool = True  # False: MSH without the internal section_k surfaces (for gmshToFoam)


@dataclass(frozen=True)
class Format:
    name: str
    suffix: str
    module: str
    function: str
    summary: str
    keeps_names: bool
    source: str = "mesh"  # "mesh": written from the ChannelMesh; "design": from the design's solid; "case": both
    variant: str = ""  # passed on as ``file_format`` (meshio pass-through formats)
    check: str = ""  # optional ``check(design)`` in ``module``, run before meshing (refuse early)
    reads_face_table: bool = False  # pairs faces (meshing.faces): the build keeps the table for it
    beside: bool = False  # its heavy part runs without the GIL (HDF5's compression): the build
    # writes it in a thread of its own, beside the other formats

    def _function(self) -> Callable[..., list[Path]]:
        fn = getattr(importlib.import_module(self.module), self.function)
        return (lambda *a: fn(*a, file_format=self.variant)) if self.variant else fn

    def write(self, mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
        return self._function()(mesh, folder, stem, options)

    def write_for(self, design: Design, mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions) -> list[Path]:
        """Write from whichever input this format is made from."""
        if self.source == "case":  # a solver case: the mesh plus the design's operating point
            return self._function()(design, mesh, folder, stem, options)
        return self._function()(design if self.source == "design" else mesh, folder, stem, options)

    def check_design(self, design: Design) -> None:
        """Raise ``DesignError`` before meshing when this format cannot be made for ``design``."""
        if self.check:
            getattr(importlib.import_module(self.module), self.check)(design)


_G = "chanmesh.writers.gmsh_formats"
_M = "chanmesh.writers.meshio_formats"
_S = "chanmesh.writers.solid_formats"

FORMATS: dict[str, Format] = {
    f.name: f
    for f in (
        Format("msh", ".msh", _G, "write_msh", "gmsh MSH 4.1 (or 2.2 with --msh-version), named physical groups", True),
        Format("xdmf", ".xdmf", "chanmesh.writers.xdmf", "write_xdmf", "XDMF + HDF5: cells and facets with integer tags, name map in JSON", False,
               beside=True),
        Format("vtu", ".vtu", "chanmesh.writers.vtu", "write_vtu", "VTK unstructured grid with a 'group' cell array, for any VTK viewer", False),
        Format("su2", ".su2", _G, "write_su2", "SU2 native mesh (gmsh's writer), markers named after the groups", True),
        Format("med", ".med", _G, "write_med", "MED (gmsh's writer), groups named", True),
        Format("cgns", ".cgns", _G, "write_cgns", "CGNS (gmsh's writer), zones and boundary conditions named", True),
        Format("inp", ".inp", _M, "write_abaqus", "Abaqus input (meshio), element sets per group", True),
        Format("mesh", ".mesh", _M, "write_medit", "Medit (meshio), references = group tags", False),
        Format("step", ".step", _S, "write_step", "STEP AP214 of the channel solid, millimetres (CAD, milling)", False, "design"),
        Format("stl", ".stl", _S, "write_stl", "binary STL of the channel solid, watertight, millimetres", False, "design"),
        Format("mould.stl", ".mould.stl", _S, "write_mould_stl", "binary STL of a casting mould: base plate with the channel standing proud, mm", False, "design"),
        Format("openfoam", "", "chanmesh.writers.openfoam", "write_openfoam", "OpenFOAM case folder openfoam/: polyMesh, 0/U, 0/p, laminar steady simpleFoam set-up from [flow]", True, "case", check="check_openfoam",
               reads_face_table=True),
        Format("dxf", ".dxf", "chanmesh.writers.dxf", "write_dxf", "DXF plan: channel outline and port punch circles on their own layers (um or mm)", False, "design"),
    )
}

DEFAULT_FORMATS = ("msh", "xdmf", "vtu")


MESHIO_PREFIX = "meshio:"


def format_named(name: str) -> Format:
    """The format called ``name``; ``meshio:FMT`` reaches any other writer of meshio's."""
    from chanmesh.errors import DesignError

    if name.startswith(MESHIO_PREFIX):
        from chanmesh.writers.meshio_formats import meshio_suffix

        fmt = name[len(MESHIO_PREFIX):]
        suffix = meshio_suffix(fmt)
        if suffix is None:
            from chanmesh.writers.meshio_formats import meshio_writers

            raise DesignError("--format", name, f"meshio has no writer '{fmt}'; it has {', '.join(meshio_writers())}")
        return Format(name, suffix, _M, "write_meshio", f"meshio's {fmt} writer (group tags as cell data)", False, variant=fmt)
    if name not in FORMATS:
        raise DesignError("--format", name, f"must be one of {', '.join(FORMATS)}, or meshio:FMT for another of meshio's writers")
    return FORMATS[name]


def fabrication_formats() -> tuple[str, ...]:
    """Names of the formats made from the design's solid rather than from the mesh."""
    return tuple(n for n, f in FORMATS.items() if f.source == "design")
