"""What a whole ``build`` costs next to the mesh generation it wraps (issue 14), same run.

Run:  PYTHONPATH=$PWD python bench/build_overhead.py [--cells 1.0] [--root OTHER_TREE ...]

Each measurement runs in a fresh child process, so its peak resident memory (ru_maxrss) is
its own. In the child: the libraries are imported first (the baseline memory), the hexahedral
mesher runs once on its own (the mesh generation time), then ``chanmesh.build.build`` writes
the default formats and the report into a temporary folder. Printed: each stage's duration
(the manifest's ``timings_s``), the build's total over the mesh generation time, and the peak
memory per cell, whole and above the baseline.

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
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def _child(cells: float, repeats: int) -> dict:
    sys.path.insert(0, str(HERE))
    from hex_speed import SPIRAL, scale_for  # noqa: E402

    import chanmesh.report.view3d  # noqa: F401  (imports first: the baseline)
    import gmsh  # noqa: F401
    import meshio  # noqa: F401
    import pyvista  # noqa: F401
    from chanmesh.build import build
    from chanmesh.design import loads_design
    from chanmesh.meshing.registry import mesher_for
    from chanmesh.progress import StageClock

    base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    design = loads_design(SPIRAL)
    scale = scale_for(cells * 1e6)
    t_mesh = float("inf")
    for _ in range(repeats):  # the best of a few: a 0.1 s stage on a shared machine is noisy
        t = time.perf_counter()
        mesh = mesher_for(design).mesh(design, scale=scale)
        t_mesh = min(t_mesh, time.perf_counter() - t)
        n = mesh.n_volume_cells
        del mesh
    clock = StageClock(quiet=True)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_TMP")) as tmp:
        t = time.perf_counter()
        build(design, Path(tmp) / "out", scale=scale, clock=clock)
        t_build = time.perf_counter() - t
    if hasattr(clock, "durations"):
        stages = clock.durations()
    else:  # older trees kept only each stage's start time
        names = list(clock.marks)
        ends = [clock.marks[k] for k in names[1:]] + [t_build]
        stages = {k: e - clock.marks[k] for k, e in zip(names, ends)}
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0
    return {"cells": n, "t_mesh": t_mesh, "t_build": t_build, "stages": stages, "peak": peak, "base": base}


def measure(root: Path, cells: float, repeats: int) -> dict:
    env = {**os.environ, "PYTHONPATH": str(root)}
    cmd = [sys.executable, __file__, "--child", str(cells), "--mesh-repeats", str(repeats)]
    done = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=str(root))
    if done.returncode:
        raise SystemExit(f"child failed for {root}:\n{done.stderr}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=float, default=1.0, help="millions of hexahedra (default 1)")
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to measure (repeatable)")
    ap.add_argument("--mesh-repeats", type=int, default=3, help="mesh generation timed this many times, best taken (default 3)")
    ap.add_argument("--child", type=float, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child is not None:
        print(json.dumps(_child(args.child, args.mesh_repeats)))
        return
    roots = args.root or [HERE.parent]
    print(f"{'tree':<28} {'hexahedra':>10} {'mesh s':>7} {'build s':>8} {'build/mesh':>10} {'peak MB':>8} {'B/cell':>7} {'B/cell>base':>11}")
    results = []
    for root in roots:
        r = measure(root.resolve(), args.cells, args.mesh_repeats)
        results.append((root, r))
        print(f"{str(root)[-28:]:<28} {r['cells']:>10,} {r['t_mesh']:>7.2f} {r['t_build']:>8.2f} {r['t_build'] / r['t_mesh']:>10.1f} "
              f"{r['peak'] / 2**20:>8,.0f} {r['peak'] / r['cells']:>7.0f} {(r['peak'] - r['base']) / r['cells']:>11.0f}")
    for root, r in results:
        shown = ", ".join(f"{k} {v:.2f}" for k, v in r["stages"].items())
        print(f"stages of {root}: {shown}")
    print("targets (issue 14): build/mesh <= 6, peak <= 400 bytes a cell")


if __name__ == "__main__":
    main()
