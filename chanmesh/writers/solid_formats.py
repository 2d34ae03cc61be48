"""Fabrication files made from the channel solid itself: STEP, STL, and a casting mould as STL.

All three are written in millimetres, the unit CAD programs, mills and printers expect:

* STEP: OpenCASCADE's export of the exact solid (planes, cylinders and spline pipes; no facets);
* STL: the solid's surface triangulated by gmsh, fine enough for curvature
  (``CURVE_POINTS`` triangle edges per full turn keep the volume within ~1e-4 of the exact
  solid, since a chord of angle 2 pi / N cuts off a fraction ~(pi/N)^2/6 of a round wall);
  binary, one shell, outward normals, watertight;
* mould: the positive a chip is cast on: a base plate ``base_thickness`` thick reaching
  ``mould_margin`` beyond the channel footprint on every side, with the channel solid standing
  proud on it (its flat floor on the plate), fused into one solid and triangulated the same way.
"""

from __future__ import annotations

import contextlib
import os
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import TYPE_CHECKING

import gmsh
import numpy as np
import trimesh

from chanmesh.design.model import Design
from chanmesh.geometry.plan import plan_outline
from chanmesh.geometry.section import section_shape_of
from chanmesh.gmshlayer.session import MODEL_UNIT, gmsh_session
from chanmesh.gmshlayer.solids import build_solid

if TYPE_CHECKING:
    from chanmesh.writers import WriteOptions

CURVE_POINTS = 180
"""Triangle edges per full turn of a curved wall in the STL (gmsh Mesh.MeshSizeFromCurvature)."""

FLAT_SIZE = 4.0
"""Largest triangle edge on flat faces, in section widths (flat faces need no refinement)."""


def triangulated_surface(design: Design, volume: int, max_size: float) -> trimesh.Trimesh:
    """Triangulate the boundary of ``volume`` in the current gmsh model (synchronized), mm,
    outward normals. Faces not on that boundary (a pipe's leftover section face) are left out.

    ``max_size`` is the largest triangle edge in model units (mm)."""
    gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", CURVE_POINTS)
    gmsh.option.setNumber("Mesh.MeshSizeMax", max_size)
    gmsh.option.setNumber("Mesh.MeshSizeExtendFromBoundary", 1)
    gmsh.option.setNumber("Mesh.Algorithm", 6)
    gmsh.model.mesh.generate(2)
    tags, coords, _ = gmsh.model.mesh.getNodes()
    order = np.argsort(tags)
    tags, points = tags[order], coords.reshape(-1, 3)[order]
    triangles = []
    for _, surf in gmsh.model.getBoundary([(3, volume)], oriented=False):
        types, _, conn = gmsh.model.mesh.getElements(2, surf)
        for t, c in zip(types, conn):
            if int(t) == 2:  # 3-node triangle
                triangles.append(np.searchsorted(tags, c).reshape(-1, 3))
    surface = trimesh.Trimesh(points, np.concatenate(triangles), process=True)
    trimesh.repair.fix_normals(surface, multibody=False)
    if not (surface.is_watertight and surface.is_winding_consistent and surface.volume > 0):
        raise RuntimeError(
            f"the triangulated surface of {design.name!r} is not a closed, consistently wound shell "
            f"(watertight={surface.is_watertight}, winding={surface.is_winding_consistent})"
        )
    return surface


def _flat_size(design: Design) -> float:
    return FLAT_SIZE * design.section.width / MODEL_UNIT


def channel_surface(design: Design) -> trimesh.Trimesh:
    """The channel solid's surface as a closed triangle shell, mm."""
    with gmsh_session(threads=design.mesh.threads):
        volume = build_solid(design)
        return triangulated_surface(design, volume, _flat_size(design))


def mould_box(design: Design) -> tuple[np.ndarray, np.ndarray]:
    """Corners (low, high) of the mould's base plate, mm: footprint + margin, under the floor."""
    fab = design.fabrication
    pts = plan_outline(design).points
    lo = pts.min(axis=0) - fab.mould_margin
    hi = pts.max(axis=0) + fab.mould_margin
    floor = section_shape_of(design).bottom
    low = np.array([lo[0], lo[1], floor - fab.base_thickness]) / MODEL_UNIT
    high = np.array([hi[0], hi[1], floor]) / MODEL_UNIT
    return low, high


def mould_surface(design: Design) -> trimesh.Trimesh:
    """Base plate fused with the channel standing proud on it, as a closed shell, mm."""
    with gmsh_session(threads=design.mesh.threads):
        channel = build_solid(design)
        low, high = mould_box(design)
        occ = gmsh.model.occ
        box = occ.addBox(*low, *(high - low))
        fused, _ = occ.fuse([(3, box)], [(3, channel)])
        occ.synchronize()
        solids = [t for d, t in fused if d == 3]
        if len(solids) != 1:
            raise RuntimeError(f"the mould of {design.name!r} came out as {len(solids)} solids, expected 1")
        return triangulated_surface(design, solids[0], max(_flat_size(design), float(np.max(high - low)) / 20))


def _write_stl(surface: trimesh.Trimesh, path: Path) -> list[Path]:
    path.write_bytes(surface.export(file_type="stl"))
    return [path]


def write_stl(design: Design, folder: Path, stem: str, options: "WriteOptions") -> list[Path]:
    """``stem.stl``: the channel solid, binary STL in millimetres."""
    return _write_stl(channel_surface(design), Path(folder) / f"{stem}.stl")


def write_mould_stl(design: Design, folder: Path, stem: str, options: "WriteOptions") -> list[Path]:
    """``stem.mould.stl``: the casting mould (base plate + channel standing proud), mm."""
    return _write_stl(mould_surface(design), Path(folder) / f"{stem}.mould.stl")


@contextlib.contextmanager
def _quiet_stdout() -> Iterator[None]:
    """Silence OpenCASCADE's STEP transfer statistics, which it prints straight to fd 1."""
    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "wb") as null:
            os.dup2(null.fileno(), 1)
            yield
    finally:
        os.dup2(saved, 1)
        os.close(saved)


def write_step(design: Design, folder: Path, stem: str, options: "WriteOptions") -> list[Path]:
    """``stem.step``: the exact channel solid as STEP, millimetres."""
    path = Path(folder) / f"{stem}.step"
    with gmsh_session(threads=design.mesh.threads):
        build_solid(design)
        with _quiet_stdout():
            gmsh.write(str(path))
    return [path]
