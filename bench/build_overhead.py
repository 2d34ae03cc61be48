"""What a whole ``build`` costs next to the mesh generation it wraps (issue 14), same run.

Run:  PYTHONPATH=$PWD python bench/build_overhead.py [--cells 1.0] [--root OTHER_TREE ...]

Each measurement runs in fresh child processes: one times the hexahedral mesher alone (best of
``--mesh-repeats``), another imports ``chanmesh.build`` (its resident size then is the
baseline) and runs ``build`` as the command line does: the default formats and the report,
into a temporary folder, so its peak resident memory (ru_maxrss) is the build's own. Printed:
each stage's duration (the manifest's ``timings_s``), the build's wall and CPU time, its wall
time over the mesh generation time, and the peak memory per cell, whole and above the
baseline. (Until 2026-12-03 one child did both, after importing gmsh and pyvista as well,
which a hexahedral build does not use: its baseline was about 70 MB higher.)

``--root DIR`` (repeatable) runs the same measurement with the chanmesh package of another
source tree as well, e.g. an export of an older commit, so before/after ratios come from one
run on one machine load:

    git archive fdd102e | tar -x -C /tmp/before
    PYTHONPATH=$PWD python bench/build_overhead.py --root /tmp/before --root $PWD

The spiral is the made-up design of bench/hex_speed.py, refined to about ``--cells`` million
hexahedra. Targets (issue 14): total / mesh <= 6, peak <= 400 bytes a cell.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

from _trees import child_json

HERE = Path(__file__).resolve().parent


def _child_mesh(cells: float, repeats: int) -> dict:
    """The mesh generation time alone (best of ``repeats``), in its own process."""
    sys.path.insert(0, str(HERE))
    from _designs import timed_bench_spiral  # noqa: E402

    _, _, t_mesh, n = timed_bench_spiral(cells, repeats)
    return {"cells": n, "t_mesh": t_mesh}


def _child(cells: float) -> dict:
    """The whole build, as the command line runs it, in a process of its own: the peak is the
    build's (baseline: the resident size once ``chanmesh.build`` is imported)."""
    sys.path.insert(0, str(HERE))
    from hex_speed import SPIRAL, scale_for  # noqa: E402

    from chanmesh.build import build
    from chanmesh.design import loads_design
    from chanmesh.progress import StageClock

    base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    design = loads_design(SPIRAL)
    scale = scale_for(cells * 1e6)
    clock = StageClock(quiet=True)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_TMP")) as tmp:
        t = time.perf_counter()
        c = time.process_time()
        build(design, Path(tmp) / "out", scale=scale, clock=clock)
        t_build = time.perf_counter() - t
        cpu = time.process_time() - c
    if hasattr(clock, "durations"):
        stages = clock.durations()
    else:  # older trees kept only each stage's start time
        names = list(clock.marks)
        ends = [clock.marks[k] for k in names[1:]] + [t_build]
        stages = {k: e - clock.marks[k] for k, e in zip(names, ends)}
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    return {"t_build": t_build, "cpu": cpu, "stages": stages, "peak": peak, "base": base}


def measure(root: Path, cells: float, repeats: int) -> dict:
    """Mesh generation time and the build, each in a fresh process, same tree."""
    out = child_json(__file__, root, ["--child-mesh", str(cells), "--mesh-repeats", str(repeats)])
    out.update(child_json(__file__, root, ["--child", str(cells)]))
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=float, default=1.0, help="millions of hexahedra (default 1)")
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to measure (repeatable)")
    ap.add_argument("--mesh-repeats", type=int, default=3, help="mesh generation timed this many times, best taken (default 3)")
    ap.add_argument("--child", type=float, help=argparse.SUPPRESS)
    ap.add_argument("--child-mesh", type=float, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child is not None:
        print(json.dumps(_child(args.child)))
        return
    if args.child_mesh is not None:
        print(json.dumps(_child_mesh(args.child_mesh, args.mesh_repeats)))
        return
    roots = args.root or [HERE.parent]
    print(f"{'tree':<28} {'hexahedra':>10} {'mesh s':>7} {'build s':>8} {'CPU s':>6} {'build/mesh':>10} {'peak MB':>8} {'B/cell':>7} {'B/cell>base':>11}")
    results = []
    for root in roots:
        r = measure(root.resolve(), args.cells, args.mesh_repeats)
        results.append((root, r))
        print(f"{str(root)[-28:]:<28} {r['cells']:>10,} {r['t_mesh']:>7.2f} {r['t_build']:>8.2f} {r['cpu']:>6.2f} {r['t_build'] / r['t_mesh']:>10.1f} "
              f"{r['peak'] / 2**20:>8,.0f} {r['peak'] / r['cells']:>7.0f} {(r['peak'] - r['base']) / r['cells']:>11.0f}")
    for root, r in results:
        shown = ", ".join(f"{k} {v:.2f}" for k, v in r["stages"].items())
        print(f"stages of {root}: {shown}")
    print("targets (issue 14): build/mesh <= 6, peak <= 400 bytes a cell")


if __name__ == "__main__":
    main()
