"""Read a solver's result (``result_readers``: OpenFOAM cases, XDMF and PVD time series, VTK
files, anything meshio reads) and pick the vector field to cut, with clear errors for missing,
scalar, misplaced or non-finite data."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from chanmesh.errors import MeshFileError
from chanmesh.post.result_readers import open_result, one_dataset

ASSOCIATIONS = ("point", "cell")


@dataclass(frozen=True)
class ResultField:
    """The volume cells of a result with one vector field chosen (coordinates in metres)."""

    grid: object  # pyvista.UnstructuredGrid holding only 3D cells
    name: str
    association: str  # "point" | "cell"
    source: str
    scale: float = 1.0  # metres per result length unit, as applied to grid.points
    time: float | None = None  # the time step read (None: the file has no time steps)
    times: tuple[float, ...] = ()
    kind: str = ""  # the reader used: openfoam, xdmf, pvd, vtk, meshio
    also: str = ""  # the other association holding the same name, if any

    def describe(self) -> str:
        """One line: field, association, and time step."""
        text = f"field {self.name} ({self.association} data"
        if self.also:
            text += f"; also {self.also} data: --association {self.also}"
        text += ")"
        if self.time is not None:
            n = len(self.times)
            text += f", time {self.time:g}" + (f" (the last of {n})" if self.time == max(self.times) and n > 1 else
                                               f" ({n} time{'s' if n != 1 else ''}: {min(self.times):g} to {max(self.times):g})")
        return text


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


def read_result(path: str | Path, field: str | None = None, scale: float = 1.0, time: float | None = None,
                association: str | None = None) -> ResultField:
    """Read ``path`` and choose the vector field ``field`` (default: the only 3-component one).

    ``scale`` multiplies the coordinates (metres per result unit); ``time`` picks a time step
    (default the last); ``association`` ("point" or "cell") picks between a point and a cell
    array of one name (default: the one there is; point data when both are). Errors list the
    fields found.
    """
    if not (math.isfinite(scale) and scale > 0):
        raise MeshFileError(f"--scale = {scale}: must be a positive number (metres per result length unit)")
    if association is not None and association not in ASSOCIATIONS:
        raise MeshFileError(f"--association = {association!r}: must be point or cell")
    p = Path(path)
    opened = open_result(p, time, point_data=association == "point")
    grid = one_dataset(opened.data)
    if grid is None or grid.n_points == 0:
        raise MeshFileError(f"result file {str(p)!r} holds no points")
    volume = _volume_cells(grid)
    if volume is None:
        raise MeshFileError(f"result file {str(p)!r} has no 3D cells to sample; a cut needs the volume mesh")
    fields = _describe(volume)
    candidates = []
    for where, data in (("point", volume.point_data), ("cell", volume.cell_data)):
        for name in data.keys():
            if not (name.startswith("vtk") or name.startswith("gmsh:")):
                candidates.append((name, where, np.asarray(data[name])))
    if field is None:
        names = sorted({n for n, w, a in candidates if a.ndim == 2 and a.shape[1] == 3
                        and (association is None or w == association)})
        if len(names) != 1:
            where = f"the {association} data of " if association else ""
            raise MeshFileError(f"--field is needed: {len(names)} vector fields in {where}{p.name}; fields: {fields}")
        field = names[0]
    found = [(n, w, a) for n, w, a in candidates if n == field]
    if not found:
        raise MeshFileError(f"--field = {field!r} is not in {p.name}; fields: {fields}")
    chosen = [c for c in found if association is None or c[1] == association]
    if not chosen:
        raise MeshFileError(f"--association = {association}: {field!r} is {found[0][1]} data in {p.name}; fields: {fields}")
    chosen.sort(key=lambda c: ASSOCIATIONS.index(c[1]))  # point data first when both are there
    _, where, arr = chosen[0]
    also = next((w for _, w, _ in found if w != where), "")
    if arr.ndim != 2 or arr.shape[1] != 3:
        comps = 1 if arr.ndim == 1 else arr.shape[1]
        raise MeshFileError(
            f"--field = {field!r} has {comps} component{'s' if comps != 1 else ''}, but a cut needs a vector "
            f"field of 3 (velocity); fields: {fields}"
        )
    finite = np.isfinite(arr).all(axis=1)
    if not finite.any():
        raise MeshFileError(f"--field = {field!r} in {p.name} has no finite value (all NaN or infinite): "
                            "the solver diverged or wrote no solution at this time")
    keep = volume.copy(deep=False)
    keep.clear_data()  # only the chosen array: a probe would prefer a point array of the same name
    (keep.point_data if where == "point" else keep.cell_data)[field] = arr
    if scale != 1.0:
        keep.points = np.asarray(volume.points, float) * scale
    return ResultField(keep, field, where, str(p), scale, opened.time, opened.times, opened.kind, also)
