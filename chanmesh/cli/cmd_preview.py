"""``chanmesh preview DESIGN --out DIR``: pictures of a design without writing any mesh files.

Writes ``<name>.plan.png`` (the plan view to scale, with scale bar, port arrows and section
ticks), ``<name>.mesh.png`` (the mesh in 3D, one colour per group, with a legend) and
``<name>.section.png`` (the section mesh, every cell edge drawn, walls labelled). The mesh is
built in memory only; ``--plan-only`` skips both mesh pictures.
"""

from __future__ import annotations

import argparse
import re
from pathlib import Path

from chanmesh.errors import DesignError

ENGINES = ("auto", "vtk", "mpl")  # report.view3d.ENGINES, repeated so that --help imports no renderer

NAME = "preview"
HELP = "draw a design: plan view to scale and the mesh in 3D, as PNG pictures"
ORDER = 15

MIN_SIDE, MAX_SIDE = 200, 8000


def size_arg(text: str) -> tuple[int, int]:
    """``'1200x800'`` -> (1200, 800), each side in [200, 8000] px."""
    match = re.fullmatch(r"\s*(\d+)\s*[xX]\s*(\d+)\s*", text)
    if not match:
        raise DesignError("--size", text, "must be WIDTHxHEIGHT in pixels, e.g. 1200x800")
    w, h = int(match.group(1)), int(match.group(2))
    if not (MIN_SIDE <= w <= MAX_SIDE and MIN_SIDE <= h <= MAX_SIDE):
        raise DesignError("--size", text, f"each side must lie in [{MIN_SIDE}, {MAX_SIDE}] pixels")
    return w, h


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML)")
    p.add_argument("--out", type=Path, default=None, help="output folder (default: out/<name>)")
    p.add_argument("--size", default="1200x800", help="picture size WIDTHxHEIGHT in pixels (default 1200x800)")
    p.add_argument("--engine", choices=ENGINES, default="auto",
                   help="3D renderer: mpl (matplotlib, no OpenGL), vtk (pyvista off-screen) or auto (default)")
    p.add_argument("--plan-only", action="store_true", help="draw the plan view only (no meshing)")


def run(args: argparse.Namespace) -> int:
    from chanmesh.build import check_estimate
    from chanmesh.design import load_design
    from chanmesh.meshing.registry import mesher_for
    from chanmesh.meshing.verify import check_boundary_tagging
    from chanmesh.report.plan_view import plan_picture
    from chanmesh.report.view3d import mesh_picture
    from chanmesh.safeio import atomic_write_bytes

    design = load_design(args.design)
    width, height = size_arg(args.size)
    out = args.out or Path("out") / design.name
    written = [atomic_write_bytes(out / f"{design.name}.plan.png", plan_picture(design, width, height).png)]
    if not args.plan_only:
        check_estimate(design)
        mesh = mesher_for(design).mesh(design)
        check_boundary_tagging(mesh)
        written.append(atomic_write_bytes(out / f"{design.name}.mesh.png", mesh_picture(mesh, design, width, height, args.engine)))
        from chanmesh.report.section_view import section_mesh_png
        from chanmesh.resolution import bend_radius, mesh_section_grid

        section = section_mesh_png(design, mesh_section_grid(design, mesh), bend_radius(design), width, max(height // 2, 260))
        written.append(atomic_write_bytes(out / f"{design.name}.section.png", section))
    for path in written:
        print(path)
    return 0
