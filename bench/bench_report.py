"""What the report costs next to the mesh it describes (issue 14), same run.

    PYTHONPATH=$PWD python bench/bench_report.py [--sizes 0.1 1 4] [--root OTHER_TREE ...] [--profile]
    PYTHONPATH=$PWD python bench/bench_report.py --writers     # the older arc table: VTK view, fabrication writers

Each (tree, size) runs in a fresh child process on the bench spiral of ``hex_speed.py``, refined
to about ``size`` million hexahedra. In the child: the mesh generation time (best of
``--mesh-repeats`` runs), then a whole ``chanmesh.build.build`` (default formats and the
report) whose "report" stage is the wall time the build spends visibly on the report (its
pictures are drawn in the build's background thread before it), then the CPU of the whole
report in the main thread, part by part (``time.process_time``, best of ``--repeats``):

* plan: the plan view (``plan_picture``); 3D: the 3D picture with its port close-ups
  (``mesh_picture``); both are part of
* pictures: ``report_pictures``, what the build draws in its background thread (older trees:
  the plan and 3D views; now also the quality histograms and the resolution figure's section
  pictures, whose solves are the build's, cached);
* page: ``report_html`` given those pictures, the work of the build's report stage (older
  trees: the histograms, the section pictures and the tables).

``--profile`` prints cProfile's top functions of the three parts for each child (slower).
``--root DIR`` (repeatable) measures another source tree's chanmesh too, e.g. an export of an
older commit, so before/after ratios come from one run on one machine load:

    git archive main | tar -x -C /tmp/before
    PYTHONPATH=$PWD python bench/bench_report.py --root /tmp/before --root $PWD

Target (issue 14): the report under 1 s at every size, both as the build's stage and as CPU.
"""

from __future__ import annotations

import argparse
import inspect
import json
import os
import sys
import tempfile
import time
from pathlib import Path

from _trees import child_json

HERE = Path(__file__).resolve().parent


def _cpu(fn, repeats: int):  # type: ignore[no-untyped-def]
    """(result, best CPU seconds) of ``fn()`` over ``repeats`` runs."""
    best = (None, float("inf"))
    for _ in range(repeats):
        c = time.process_time()
        out = fn()
        best = min(best, (out, time.process_time() - c), key=lambda r: r[1])
    return best


def _child(cells: float, mesh_repeats: int, repeats: int, profile: bool, pictures: str | None) -> dict:
    sys.path.insert(0, str(HERE))
    from _designs import timed_bench_spiral  # noqa: E402

    from chanmesh.build import build
    from chanmesh.progress import StageClock
    from chanmesh.report.html import report_html, report_pictures
    from chanmesh.report.plan_view import plan_picture
    from chanmesh.report.view3d import mesh_picture

    design, scale, t_mesh, _ = timed_bench_spiral(cells, mesh_repeats)
    clock = StageClock(quiet=True)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_TMP")) as tmp:
        t = time.perf_counter()
        result = build(design, Path(tmp) / "out", scale=scale, clock=clock)
        t_build = time.perf_counter() - t
    mesh, manifest = result.mesh, result.manifest
    _, c_plan = _cpu(lambda: plan_picture(design, 1100, 720).png, repeats)
    view, c_view = _cpu(lambda: mesh_picture(mesh, design, 1100, 720), repeats)
    # what the build's background thread draws (older trees: the plan and 3D views only) and
    # what its report stage then does with them
    ahead = len(inspect.signature(report_pictures).parameters) > 2
    drawn, c_pics = _cpu(lambda: report_pictures(design, mesh, manifest) if ahead else report_pictures(design, mesh),
                            repeats)
    _, c_page = _cpu(lambda: report_html(design, mesh, manifest, [], drawn), repeats)
    if pictures:
        Path(pictures).mkdir(parents=True, exist_ok=True)
        (Path(pictures) / f"view_{mesh.n_volume_cells}.png").write_bytes(view)
    top = ""
    if profile:
        import cProfile
        import io
        import pstats

        prof = cProfile.Profile()
        prof.enable()
        drawn = report_pictures(design, mesh, manifest) if ahead else report_pictures(design, mesh)
        report_html(design, mesh, manifest, [], drawn)
        prof.disable()
        out = io.StringIO()
        pstats.Stats(prof, stream=out).sort_stats("cumulative").print_stats(r"chanmesh|savefig|draw\b", 30)
        top = out.getvalue()
    return {"cells": mesh.n_volume_cells, "t_mesh": t_mesh, "t_build": t_build,
            "t_report_stage": clock.durations()["report"],
            "cpu": {"plan": c_plan, "3D": c_view, "pictures": c_pics, "page": c_page}, "profile": top}


def measure(root: Path, cells: float, args: argparse.Namespace) -> dict:
    child = ["--child", str(cells), "--mesh-repeats", str(args.mesh_repeats), "--repeats", str(args.repeats)] \
        + (["--profile"] if args.profile else []) \
        + (["--pictures", str(Path(args.pictures).resolve() / root.name)] if args.pictures else [])
    return child_json(__file__, root, child)


def sizes_table(args: argparse.Namespace) -> None:
    roots = args.root or [HERE.parent]
    print(f"{'tree':<24} {'hexahedra':>10} {'mesh s':>7} {'build s':>8} {'report stage s':>14} {'/mesh':>6} "
          f"{'plan CPU':>8} {'3D CPU':>7} {'pictures CPU':>12} {'page CPU':>8} {'report CPU s':>12} {'/mesh':>6}")
    for size in args.sizes:
        for root in roots:
            r = measure(root.resolve(), size, args)
            cpu = r["cpu"]["pictures"] + r["cpu"]["page"]
            print(f"{str(root)[-24:]:<24} {r['cells']:>10,} {r['t_mesh']:>7.2f} {r['t_build']:>8.2f} "
                  f"{r['t_report_stage']:>14.2f} {r['t_report_stage'] / r['t_mesh']:>6.1f} {r['cpu']['plan']:>8.2f} "
                  f"{r['cpu']['3D']:>7.2f} {r['cpu']['pictures']:>12.2f} {r['cpu']['page']:>8.2f} {cpu:>12.2f} {cpu / r['t_mesh']:>6.1f}", flush=True)
            if r["profile"]:
                print(r["profile"])
    print("report stage: the build's visible wait (timings_s); pictures: what the build draws in its background "
          "thread (plan and 3D are part of it); page: report_html given those pictures; report CPU = pictures + page, "
          "each the best of --repeats; target (issue 14): both under 1 s at every size")


def writers_table() -> None:
    """The arc table of the first report round: meshing, report.html, the 3D view with VTK and
    each fabrication writer, for a small and a medium arc."""
    import dataclasses

    from chanmesh.design import loads_design
    from chanmesh.manifest import make_manifest
    from chanmesh.meshing.registry import mesher_for
    from chanmesh.report import report_html
    from chanmesh.report.view3d import mesh_picture
    from chanmesh.writers import FORMATS, WriteOptions, fabrication_formats

    base = loads_design('name = "bench-arc"\nunit = "um"\n[section]\nwidth = 200\nheight = 50\n[path]\n'
                        'kind = "arc"\nradius = 2000\nangle = 180\ninlet_length = 500\noutlet_length = 500\n')

    def timed(fn):  # type: ignore[no-untyped-def]
        t = time.perf_counter()
        out = fn()
        return out, time.perf_counter() - t

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


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=float, nargs="+", default=[0.1, 1.0, 4.0], help="millions of hexahedra")
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to measure (repeatable)")
    ap.add_argument("--mesh-repeats", type=int, default=3, help="mesh generation timed this many times, best taken")
    ap.add_argument("--repeats", type=int, default=2, help="each report part timed this many times, best taken")
    ap.add_argument("--profile", action="store_true", help="print cProfile's top functions of the report")
    ap.add_argument("--pictures", help="folder to keep each tree's 3D picture in (to look at them)")
    ap.add_argument("--writers", action="store_true", help="the older arc table: VTK view and fabrication writers")
    ap.add_argument("--child", type=float, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child is not None:
        print(json.dumps(_child(args.child, args.mesh_repeats, args.repeats, args.profile, args.pictures)))
    elif args.writers:
        writers_table()
    else:
        sizes_table(args)


if __name__ == "__main__":
    main()
