"""Read a solver's result (VTU/VTK through VTK itself, XDMF and the rest through meshio) and
pick the vector field to cut, with clear errors for missing, scalar or misplaced data."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from chanmesh.errors import MeshFileError

VTK_SUFFIXES = {".vtu", ".vtk", ".vtp", ".vts", ".vtr", ".vti", ".vtm", ".pvtu", ".pvd"}


@dataclass(frozen=True)
class ResultField:
    """The volume cells of a result with one vector field chosen (coordinates in metres)."""

    grid: object  # pyvista.UnstructuredGrid holding only 3D cells
    name: str
    association: str  # "point" | "cell"
    source: str


def _read_dataset(path: Path):  # type: ignore[no-untyped-def]
    import pyvista as pv

    if not path.exists():
        raise MeshFileError(f"result file {str(path)!r} does not exist")
    try:
        if path.suffix.lower() in VTK_SUFFIXES:
            data = pv.read(str(path))
        else:
            import meshio

            data = pv.from_meshio(meshio.read(str(path)))
    except MeshFileError:
        raise
    except Exception as exc:  # readers raise anything from ValueError to their own types
        raise MeshFileError(f"result file {str(path)!r} cannot be read: {exc}") from None
    if isinstance(data, pv.MultiBlock):
        data = data.combine()
    if data is None or data.n_points == 0:
        raise MeshFileError(f"result file {str(path)!r} holds no points")
    return data.cast_to_unstructured_grid()


def _volume_cells(grid):  # type: ignore[no-untyped-def]
    """Only the 3D cells: boundary triangles of a result would catch probes on the section plane."""
    try:  # VTK >= 9.6
        from vtkmodules.vtkCommonDataModel import vtkCellTypeUtilities as cell_types
    except ImportError:  # pragma: no cover - older VTK
        from vtkmodules.vtkCommonDataModel import vtkCellTypes as cell_types

    types = np.asarray(grid.celltypes)
    dims = {int(t): cell_types.GetDimension(int(t)) for t in np.unique(types)}
    keep = np.array([dims[int(t)] == 3 for t in types], bool)
    if not keep.any():
        return None
    return grid if keep.all() else grid.extract_cells(np.flatnonzero(keep))


def _describe(grid) -> str:  # type: ignore[no-untyped-def]
    rows = []
    for where, data in (("point", grid.point_data), ("cell", grid.cell_data)):
        for name in data.keys():
            if name.startswith("vtk") or name.startswith("gmsh:"):
                continue
            arr = np.asarray(data[name])
            comps = 1 if arr.ndim == 1 else arr.shape[1]
            rows.append(f"{name} ({where}, {comps} component{'s' if comps != 1 else ''})")
    return ", ".join(rows) if rows else "(none)"


def read_result(path: str | Path, field: str | None = None, scale: float = 1.0) -> ResultField:
    """Read ``path`` and choose the vector field ``field`` (default: the only 3-component one).

    ``scale`` multiplies the coordinates (metres per result unit). Errors list the fields found.
    """
    if not (math.isfinite(scale) and scale > 0):
        raise MeshFileError(f"--scale = {scale}: must be a positive number (metres per result length unit)")
    p = Path(path)
    grid = _read_dataset(p)
    volume = _volume_cells(grid)
    if volume is None:
        raise MeshFileError(f"result file {str(p)!r} has no 3D cells to sample; a cut needs the volume mesh")
    fields = _describe(volume)
    candidates = []
    for where, data in (("point", volume.point_data), ("cell", volume.cell_data)):
        for name in data.keys():
            arr = np.asarray(data[name])
            candidates.append((name, where, arr))
    if field is None:
        vectors = [(n, w) for n, w, a in candidates if a.ndim == 2 and a.shape[1] == 3 and not n.startswith("vtk")]
        if len(vectors) != 1:
            raise MeshFileError(f"--field is needed: {len(vectors)} vector fields in {p.name}; fields: {fields}")
        field, where = vectors[0]
    else:
        found = [(n, w, a) for n, w, a in candidates if n == field]
        if not found:
            raise MeshFileError(f"--field = {field!r} is not in {p.name}; fields: {fields}")
        _, where, arr = found[0]
        if arr.ndim != 2 or arr.shape[1] != 3:
            comps = 1 if arr.ndim == 1 else arr.shape[1]
            raise MeshFileError(
                f"--field = {field!r} has {comps} component{'s' if comps != 1 else ''}, but a cut needs a vector "
                f"field of 3 (velocity); fields: {fields}"
            )
    keep = volume.copy(deep=False)
    if scale != 1.0:
        keep.points = np.asarray(volume.points, float) * scale
    return ResultField(keep, field, where, str(p))
