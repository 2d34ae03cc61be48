"""How long the report and the pictures take next to the mesh they describe (same run).

    PYTHONPATH=. python bench/bench_report.py

Prints seconds and ratios for a small and a medium arc: meshing, report.html (plan view, 3D
view with matplotlib, tables), the 3D view with VTK, and each fabrication writer.
"""

from __future__ import annotations

import dataclasses
import tempfile
import time
from pathlib import Path

from chanmesh.design import loads_design
from chanmesh.manifest import make_manifest
from chanmesh.meshing.registry import mesher_for
from chanmesh.report import report_html
from chanmesh.report.view3d import mesh_picture
from chanmesh.writers import FORMATS, WriteOptions, fabrication_formats

DESIGN = """
name = "bench-arc"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "arc"
radius = 2000
angle = 180
inlet_length = 500
outlet_length = 500
"""


def timed(fn):  # type: ignore[no-untyped-def]
    t = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t


def main() -> None:
    base = loads_design(DESIGN)
    mesh_picture(mesher_for(base).mesh(dataclasses.replace(base, mesh=dataclasses.replace(base.mesh, cells_across=2))), base, 200, 200)  # warm-up imports
    for across in (4, 12):
        design = dataclasses.replace(base, mesh=dataclasses.replace(base.mesh, cells_across=across))
        mesh, t_mesh = timed(lambda: mesher_for(design).mesh(design))
        manifest = make_manifest(design, mesh, [], {}, {})
        _, t_report = timed(lambda: report_html(design, mesh, manifest, []))
        _, t_vtk = timed(lambda: mesh_picture(mesh, design, 1100, 720, engine="vtk"))
        print(f"cells_across={across}: {mesh.n_volume_cells:,} cells, mesh {t_mesh:.2f} s, report {t_report:.2f} s "
              f"(report/mesh {t_report / t_mesh:.2f}), 3D view with VTK {t_vtk:.2f} s")
        with tempfile.TemporaryDirectory() as folder:
            for name in fabrication_formats():
                _, t = timed(lambda: FORMATS[name].write_for(design, mesh, Path(folder), design.name, WriteOptions()))
                print(f"  {name:<10} {t:.2f} s (/mesh {t / t_mesh:.2f})")


if __name__ == "__main__":
    main()
