"""Open what solvers write, one time step of it, with the readers' own chatter kept off the terminal.

* an OpenFOAM case (its folder, its ``.foam`` file or ``system/controlDict``): VTK's OpenFOAM
  reader, the ``internalMesh`` block, cell data as the solver wrote it (point data only when
  asked for: VTK's cell-to-point average);
* XDMF, including dolfinx's time series (a mesh grid plus a temporal collection per function,
  topology shared by ``xi:include``): VTK's XDMF reader;
* PVD time series and every other VTK format: VTK's readers through pyvista;
* anything else meshio reads.

Time series: the last time by default, ``time`` picks another (matched to 1e-9 of the span).
Every failure is a ``MeshFileError`` of one line; what the reader printed (VTK's error output,
the XDMF library's messages) is captured at the file-descriptor level and only its first error
line is quoted.
"""

from __future__ import annotations

import contextlib
import os
import re
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterator

import numpy as np

from chanmesh.errors import MeshFileError

VTK_SUFFIXES = {".vtu", ".vtk", ".vtp", ".vts", ".vtr", ".vti", ".vtm", ".pvtu"}
FORMAT_NAMES = {".vtu": "VTU", ".pvtu": "PVTU", ".vtk": "legacy VTK", ".vtm": "VTM", ".pvd": "PVD",
                ".xdmf": "XDMF", ".xmf": "XDMF", ".foam": "OpenFOAM case"}


@dataclass(frozen=True)
class OpenedResult:
    """One time step of a result file: the dataset and where it came from."""

    data: Any  # pyvista DataSet or MultiBlock
    kind: str  # "openfoam" | "pvd" | "xdmf" | "vtk" | "meshio"
    time: float | None  # the time read, None for a file without time steps
    times: tuple[float, ...]  # every time the file holds


@contextlib.contextmanager
def quiet_output() -> Iterator[list[str]]:
    """Silence VTK's warnings and send file descriptors 1 and 2 to a temporary file meanwhile;
    the captured text is appended to the yielded list when the block ends."""
    captured: list[str] = []
    try:
        from vtkmodules.vtkCommonCore import vtkObject

        was = vtkObject.GetGlobalWarningDisplay()
        vtkObject.GlobalWarningDisplayOff()
    except ImportError:  # pragma: no cover - VTK is a dependency
        vtkObject, was = None, 0
    saved: list[tuple[int, int]] = []
    for stream in (sys.stdout, sys.stderr):  # what Python still buffers belongs on the terminal
        try:
            stream.flush()
        except (AttributeError, ValueError, OSError):
            pass
    with tempfile.TemporaryFile() as sink:
        try:
            for fd in (1, 2):
                try:
                    saved.append((fd, os.dup(fd)))
                    os.dup2(sink.fileno(), fd)
                except OSError:  # no such descriptor (embedded use): nothing to silence
                    pass
            yield captured
        finally:
            for fd, copy in saved:
                os.dup2(copy, fd)
                os.close(copy)
            if vtkObject is not None:
                vtkObject.SetGlobalWarningDisplay(was)
            sink.seek(0)
            captured.append(sink.read().decode("utf-8", "replace"))


def first_error(text: str) -> str:
    """The first error line a reader printed, without VTK's source-file prefixes (or '')."""
    for line in text.splitlines():
        if re.search(r"ERR\||ERROR|[Ee]rror", line):
            msg = re.sub(r"^.*?\(0x[0-9a-f]+\):\s*", "", line.strip())
            msg = re.sub(r"^.*?ERR\|\s*", "", msg)
            return msg[:160]
    return ""


def _case_file(path: Path) -> Path | None:
    """The file VTK's OpenFOAM reader opens for ``path``, or None if ``path`` is no case."""
    if path.is_dir():
        foams = sorted(path.glob("*.foam"))
        if foams:
            return foams[0]
        control = path / "system" / "controlDict"
        return control if control.is_file() else None
    if path.suffix.lower() == ".foam" or (path.name == "controlDict" and path.parent.name == "system"):
        return path
    return None


def pick_time(times: list[float] | tuple[float, ...], wanted: float | None, source: str) -> float | None:
    """The last of ``times``, or the one matching ``wanted``; a one-line error lists what there is."""
    times = sorted(float(t) for t in times)
    if not times:
        if wanted is not None:
            raise MeshFileError(f"--time = {wanted:g}: {source} has no time steps; leave --time out")
        return None
    if wanted is None:
        return times[-1]
    span = max(times[-1] - times[0], abs(times[-1]), 1e-300)
    best = min(times, key=lambda t: abs(t - wanted))
    if abs(best - wanted) <= 1e-9 * span:
        return best
    shown = ", ".join(f"{t:g}" for t in (times if len(times) <= 8 else times[:3] + times[-3:]))
    more = "" if len(times) <= 8 else f" ({len(times)} in all)"
    raise MeshFileError(f"--time = {wanted:g} is not a time of {source}; it has {shown}{more}")


def _open_openfoam(case: Path, time: float | None, point_data: bool, source: str) -> OpenedResult:
    import pyvista as pv

    reader = pv.OpenFOAMReader(str(case))
    reader.skip_zero_time = False
    t = pick_time(reader.time_values, time, source)
    if t is not None:
        reader.set_active_time_value(t)
    reader.disable_all_patch_arrays()
    reader.enable_patch_array("internalMesh")
    reader.cell_to_point_creation = point_data
    data = reader.read()
    block = data["internalMesh"] if isinstance(data, pv.MultiBlock) and "internalMesh" in data.keys() else data
    return OpenedResult(block, "openfoam", t, tuple(sorted(reader.time_values)))


def _open_series(path: Path, kind: str, time: float | None, source: str) -> OpenedResult:
    """PVD through pyvista; XDMF through VTK's own reader (pyvista's wrapper fails on a file
    without time steps)."""
    import pyvista as pv

    if kind == "pvd":
        reader = pv.PVDReader(str(path))
        times = list(reader.time_values or [])
        t = pick_time(times, time, source)
        if t is not None:
            reader.set_active_time_value(t)
        return OpenedResult(reader.read(), kind, t, tuple(sorted(times)))
    from vtkmodules.vtkCommonExecutionModel import vtkStreamingDemandDrivenPipeline as pipeline
    from vtkmodules.vtkIOXdmf2 import vtkXdmfReader

    xr = vtkXdmfReader()
    xr.SetFileName(str(path))
    xr.UpdateInformation()
    info = xr.GetOutputInformation(0)
    times = list(info.Get(pipeline.TIME_STEPS()) or []) if info.Has(pipeline.TIME_STEPS()) else []
    t = pick_time(times, time, source)
    if t is not None:
        xr.UpdateTimeStep(t)
    else:
        xr.Update()
    return OpenedResult(pv.wrap(xr.GetOutputDataObject(0)), kind, t, tuple(sorted(times)))


def open_result(path: Path, time: float | None = None, point_data: bool = True) -> OpenedResult:
    """Read one time step of ``path`` (see the module docstring); ``point_data`` = False keeps
    an OpenFOAM case to its cell data."""
    source = repr(str(path))
    if not path.exists():
        raise MeshFileError(f"result file {source} does not exist")
    case = _case_file(path)
    suffix = path.suffix.lower()
    if case is None and path.is_dir():
        raise MeshFileError(f"result {source} is a folder but no OpenFOAM case (no *.foam, no system/controlDict)")
    kind = ("openfoam" if case is not None else "pvd" if suffix == ".pvd" else "xdmf" if suffix in (".xdmf", ".xmf")
            else "vtk" if suffix in VTK_SUFFIXES else "meshio")
    if kind in ("vtk", "meshio") and time is not None:
        raise MeshFileError(f"--time = {time:g}: {source} holds one state, not a time series; leave --time out")
    what = FORMAT_NAMES.get(suffix, "OpenFOAM case" if kind == "openfoam" else "a mesh file")
    with quiet_output() as said:
        try:
            if kind == "openfoam":
                opened = _open_openfoam(case, time, point_data, source)  # type: ignore[arg-type]
            elif kind in ("pvd", "xdmf"):
                opened = _open_series(path, kind, time, source)
            elif kind == "vtk":
                import pyvista as pv

                opened = OpenedResult(pv.read(str(path)), kind, None, ())
            else:
                import meshio
                import pyvista as pv

                opened = OpenedResult(pv.from_meshio(meshio.read(str(path))), kind, None, ())
            error = None
        except MeshFileError:
            raise
        except Exception as exc:  # readers raise anything from ValueError to their own types
            opened, error = None, str(exc).strip().splitlines()[0][:160] if str(exc).strip() else type(exc).__name__
    reader_said = first_error(said[0]) if said else ""
    if opened is None or _empty(opened.data):
        why = error or reader_said or "no cells or points in it"
        raise MeshFileError(f"result file {source} cannot be read as {what}: {why}")
    return opened


def _empty(data: Any) -> bool:
    """True when ``data`` (a dataset or a MultiBlock of them) has no points at all."""
    import pyvista as pv

    if data is None:
        return True
    if isinstance(data, pv.MultiBlock):
        return all(_empty(block) for block in data)
    try:
        return int(data.n_points) == 0
    except (AttributeError, TypeError):
        return True


def user_arrays(ds: Any) -> list[str]:
    """Names of the point and cell arrays that are data, not reader bookkeeping."""
    names = list(ds.point_data.keys()) + list(ds.cell_data.keys())
    return [n for n in names if not (n.startswith("vtk") or n.startswith("gmsh:"))]


def one_dataset(data: Any) -> Any:
    """A single unstructured grid from a reader's output.

    A MultiBlock's leaves without data are dropped (dolfinx writes the bare mesh as a grid of
    its own); leaves on the same mesh (dolfinx: one grid per function) are merged array by
    array; leaves on different meshes (pieces of a partitioned result) are combined."""
    import pyvista as pv

    if not isinstance(data, pv.MultiBlock):
        return data.cast_to_unstructured_grid()
    leaves: list[Any] = []

    def walk(block: Any) -> None:
        if block is None:
            return
        if isinstance(block, pv.MultiBlock):
            for child in block:
                walk(child)
        elif block.n_points > 0:
            leaves.append(block)

    walk(data)
    if not leaves:
        return None
    with_data = [b for b in leaves if user_arrays(b)] or leaves
    first = with_data[0]
    same = all(b.n_points == first.n_points and b.n_cells == first.n_cells
               and np.array_equal(np.asarray(b.points), np.asarray(first.points)) for b in with_data[1:])
    if same:
        grid = first.cast_to_unstructured_grid().copy()
        for b in with_data[1:]:
            for name in b.point_data.keys():
                grid.point_data[name] = b.point_data[name]
            for name in b.cell_data.keys():
                grid.cell_data[name] = b.cell_data[name]
        return grid
    return pv.MultiBlock(with_data).combine()
