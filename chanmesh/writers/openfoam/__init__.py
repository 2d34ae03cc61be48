"""``--format openfoam``: a complete steady laminar OpenFOAM case folder, ``<out>/openfoam/``,
that runs with ``simpleFoam -case <out>/openfoam`` as written.

    openfoam/
      constant/polyMesh/   points faces owner neighbour (binary) boundary faceZones
      constant/            transportProperties turbulenceProperties momentumTransport
      0/                   U p
      system/              controlDict fvSchemes fvSolution
      <name>.foam          empty; lets ParaView and VTK's reader open the case

The polyMesh comes straight from the ``ChannelMesh`` (``polymesh.py``), the dictionaries from
the design's ``[flow]`` (``case.py``). A design without ``[flow]`` is refused before meshing:
a case needs a flow rate, and a made-up one would run without complaint.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import MISSING, DesignError
from chanmesh.meshing.model import ChannelMesh
from chanmesh.writers import WriteOptions

if TYPE_CHECKING:
    from chanmesh.writers.openfoam.case import Operating
    from chanmesh.writers.openfoam.polymesh import PolyMesh

CASE_FOLDER = "openfoam"


def check_openfoam(design: Design) -> None:
    """Refuse, before meshing, a design the case cannot be made for (no operating point)."""
    if design.flow.rate is None and design.flow.velocity is None:
        raise DesignError("flow.rate", MISSING, "--format openfoam needs an operating point: add a [flow] table "
                          "with rate (e.g. rate = \"100uL/min\") or velocity (e.g. velocity = \"0.1m/s\")")
    operating_point(design)


def operating_point(design: Design) -> "Operating":
    """Rate, kinematic viscosity and density from the design's [flow] (numbers/fluid.py)."""
    from chanmesh.geometry.section import SectionShape
    from chanmesh.numbers.fluid import fluid_of
    from chanmesh.numbers.report import _operating_point
    from chanmesh.writers.openfoam.case import Operating

    fluid = fluid_of(design.flow)
    rate, _ = _operating_point(design.flow, SectionShape.of(design.section).area)
    return Operating(rate, fluid.viscosity / fluid.density, fluid.density, design.mesh.cells != "hex")


def section_directions(design: Design) -> dict[str, np.ndarray]:
    """Downstream unit vector (the centreline tangent) at each ``section_k`` station."""
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.geometry.stations import mesh_station_arc_lengths

    stations = mesh_station_arc_lengths(design)
    if not stations:
        return {}
    t = centerline_of(design).tangents(np.asarray(stations))
    return {f"section_{k + 1}": t[k] for k in range(len(stations))}


def developed_inlet(design: Design, poly: "PolyMesh", rate: float) -> dict[str, np.ndarray]:
    """Face velocities of the fully developed profile on a single rectangular ``inlet``, scaled
    so that their flux is exactly ``rate``; {} when the inlet is not that case."""
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.geometry.section import SectionShape
    from chanmesh.numbers.duct import velocity_over_mean
    from chanmesh.writers.openfoam.polymesh import _area_vectors

    patch = next((p for p in poly.patches if p.name == "inlet"), None)
    shape = SectionShape.of(design.section)
    if patch is None or design.section.shape != "rectangle":
        return {}
    line = centerline_of(design)
    p0, t0, n0 = line.points([0.0])[0], line.tangents([0.0])[0], line.normals([0.0])[0]
    faces = np.arange(patch.start, patch.start + patch.size)
    size = poly.offsets[faces + 1] - poly.offsets[faces]
    centre = sum(poly.points[poly.nodes[poly.offsets[faces] + np.minimum(r, size - 1)]] for r in range(4))
    centre = centre / 4.0 if np.all(size == 4) else _centroids(poly, faces)
    u = (centre - p0) @ n0
    v = centre[:, 2] - (shape.bottom + shape.mean_height / 2.0)
    phi = velocity_over_mean(u, v, shape.width, shape.mean_height)
    area = np.abs(_area_vectors(poly.points, poly.offsets, poly.nodes, faces) @ t0)
    speed = phi * rate / float(np.sum(phi * area))
    return {"inlet": speed[:, None] * t0[None, :]}


def _centroids(poly: "PolyMesh", faces: np.ndarray) -> np.ndarray:
    return np.array([poly.points[poly.nodes[poly.offsets[f]:poly.offsets[f + 1]]].mean(axis=0) for f in faces])


def write_openfoam(design: Design, mesh: ChannelMesh, folder: Path, stem: str, options: WriteOptions,
                   binary: bool = True) -> list[Path]:
    """Write the case into ``folder/openfoam``; returns every file written."""
    from chanmesh.writers.openfoam.case import write_constant, write_fields, write_mesh_dicts, write_system
    from chanmesh.writers.openfoam.polymesh import poly_mesh

    check_openfoam(design)
    op = operating_point(design)
    poly = poly_mesh(mesh, section_directions(design))
    case = Path(folder) / CASE_FOLDER
    files = write_polymesh(case, poly, binary)
    files += write_mesh_dicts(case, poly)
    files += write_fields(case, poly, op, developed_inlet(design, poly, op.rate))
    files += write_constant(case, op)
    files += write_system(case, poly, op)
    marker = case / f"{stem}.foam"
    marker.write_bytes(b"")
    return files + [marker]


def write_polymesh(case: Path, poly: "PolyMesh", binary: bool = True) -> list[Path]:
    """points, faces, owner, neighbour of ``poly`` into ``case/constant/polyMesh``."""
    from chanmesh.writers.openfoam.foamio import write_faces_ascii, write_list_file

    d = case / "constant" / "polyMesh"
    d.mkdir(parents=True, exist_ok=True)
    note = f"nPoints:{len(poly.points)}  nCells:{poly.n_cells}  nFaces:{poly.n_faces}  nInternalFaces:{poly.n_internal}"
    files = [write_list_file(d / "points", "vectorField", "points", [poly.points], binary)]
    if binary:
        files.append(write_list_file(d / "faces", "faceCompactList", "faces", [poly.offsets, poly.nodes], binary))
    else:
        files.append(write_faces_ascii(d / "faces", poly.offsets, poly.nodes))
    files.append(write_list_file(d / "owner", "labelList", "owner", [poly.owner], binary, note))
    files.append(write_list_file(d / "neighbour", "labelList", "neighbour", [poly.neighbour], binary, note))
    return files
