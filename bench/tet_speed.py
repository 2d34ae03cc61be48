"""Where a tetrahedral build spends its time: solid, surface (1D/2D) and volume (3D) meshing
under the background size field, gmsh's optimiser, extraction (issue 14: a 1 M-tet build at
least 3x faster than before; issue 15 item 4: the thin arc that kept gmsh busy).

Run:  PYTHONPATH=$PWD python bench/tet_speed.py [--cells 0.2] [--stuck]
      PYTHONPATH=$PWD python bench/tet_speed.py --build [--root OTHER_TREE ...]

``--cells`` refines the bench spiral (bench/hex_speed.py, as tetrahedra with wall_ratio 1.2)
to about that many million tetrahedra (bisection on the estimate). ``--stuck`` instead meshes
the 30 x 12 um arc of issue 15 item 4 with the optimiser inside ``generate`` and after it.
Each run is in-process (not the child process of meshing/tet_process.py) so that the stages
can be timed; gmsh's own ``generate(2)`` then ``generate(3)`` split the surface from the volume.

``--build`` times the whole ``build`` (default formats and the report, as the command line
runs it) of the bench spiral meshed by ``BUILD_SPIRAL_MESH``, about a million tetrahedra with every size given explicitly, in a
fresh process per source tree (``--root``, repeatable, e.g. an export of an older commit), so
before/after ratios come from one run on one machine load (issue 14: at least 3x faster).
"""

from __future__ import annotations

import argparse
import sys
import time
from dataclasses import replace
from pathlib import Path

HERE = Path(__file__).resolve().parent

STUCK = (
    'name = "stuck"\nunit = "um"\n[section]\nwidth = 30\nheight = 12\n'
    '[path]\nkind = "arc"\nradius = 300\nangle = 180\ninlet_length = 90\noutlet_length = 90\n'
    '[mesh]\ncells = "tet"\ncells_across = 6\nfirst_cell = 1.5\nmax_cells = 200000\n'
)


BUILD_SPIRAL_MESH = 'cells = "tet"\ncells_across = 10\nfirst_cell = 13\nwall_ratio = 1.5\nmax_cells = 5000000'
"""The bench spiral's [mesh] table for ``--build``: about 1.0 M tetrahedra (estimate 1.15 M)."""


def _child_build() -> dict:
    """The whole build of the tetrahedral bench spiral in this process (the tree on PYTHONPATH)."""
    import json
    import os
    import resource
    import tempfile

    sys.path.insert(0, str(HERE))
    from _designs import bench_design_text
    from hex_speed import SPIRAL_PATH

    from chanmesh.build import build
    from chanmesh.design import loads_design
    from chanmesh.progress import StageClock

    design = loads_design(bench_design_text("bench-spiral-tet", SPIRAL_PATH, BUILD_SPIRAL_MESH))
    clock = StageClock(quiet=True)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_TMP")) as tmp:
        t = time.perf_counter()
        build(design, Path(tmp) / "out", clock=clock)
        t_build = time.perf_counter() - t
        manifest = json.loads((Path(tmp) / "out" / "manifest.json").read_text())
    # the peak of this process, which holds the mesh once the meshing process (a grandchild
    # under multiprocessing's forkserver, so neither its CPU nor its memory is counted) sends it
    stages = clock.durations() if hasattr(clock, "durations") else {}
    counts = manifest.get("cells") or {}
    return {"t_build": t_build, "stages": stages, "tets": counts.get("tetra", 0),
            "peak": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024.0}


def whole_builds(roots: list[Path]) -> None:
    """``--build``: each tree's whole build in a child process, then the ratios to the first."""
    from _trees import child_json

    results = []
    print(f"{'tree':<28} {'tetrahedra':>10} {'build s':>8} {'peak MB':>8}  stages (s)")
    for root in roots:
        r = child_json(__file__, root, ["--child-build"])
        results.append(r)
        shown = ", ".join(f"{k} {v:.1f}" for k, v in r["stages"].items() if v >= 0.05)
        print(f"{str(root)[-28:]:<28} {r['tets']:>10,} {r['t_build']:>8.1f} {r['peak'] / 2**20:>8,.0f}  {shown}",
              flush=True)
    for root, r in zip(roots[1:], results[1:]):
        print(f"{str(roots[0])[-28:]} / {str(root)[-28:]}: {results[0]['t_build'] / r['t_build']:.2f}x the wall time "
              "(issue 14 target: at least 3x)")


def timed_mesh(design, scale: float, optimise_after: bool = False) -> dict:  # type: ignore[no-untyped-def]
    """Stage times of ``tet.mesh_tet`` in this process, summed over its parts (which run in
    turn here, in child processes side by side in a build)."""
    import gmsh

    from chanmesh.meshing import tet

    spent = {"surface": 0.0, "volume": 0.0, "optimiser": 0.0, "extract": 0.0}
    original, original_extract = gmsh.model.mesh.generate, tet._extract

    def generate(dim: int) -> None:
        t = time.perf_counter()
        if optimise_after:
            gmsh.option.setNumber("Mesh.Optimize", 0)
        original(2)
        t2 = time.perf_counter()
        original(3)
        t3 = time.perf_counter()
        if optimise_after:
            gmsh.model.mesh.optimize("")
        t4 = time.perf_counter()
        spent["surface"] += t2 - t
        spent["volume"] += t3 - t2
        spent["optimiser"] += t4 - t3

    def extract(model_unit):  # type: ignore[no-untyped-def]
        t = time.perf_counter()
        out = original_extract(model_unit)
        spent["extract"] += time.perf_counter() - t
        return out

    gmsh.model.mesh.generate = generate
    tet._extract = extract
    try:
        t0 = time.perf_counter()
        mesh = tet.mesh_tet(design, scale=scale)
        t1 = time.perf_counter()
    finally:
        gmsh.model.mesh.generate = original
        tet._extract = original_extract
    return {
        "tets": mesh.n_volume_cells,
        "triangles": mesh.cell_counts().get("triangle", 0),
        "parts": mesh.info.get("mesh_parts", 1),
        "solid": t1 - t0 - sum(spent.values()),  # solid, labels, size field and the join
        **spent,
        "total": t1 - t0,
    }


def show(label: str, r: dict) -> None:
    print(f"{label}: {r['tets']:,} tets, {r['triangles']:,} boundary triangles, {r.get('parts', 1)} part(s) in turn; "
          f"total {r['total']:.1f} s = "
          f"solid {r['solid']:.1f} + surface {r['surface']:.1f} + volume {r['volume']:.1f} + optimiser "
          f"{r['optimiser']:.1f} + extract {r['extract']:.1f}; {r['tets'] / r['total'] / 1e3:.1f} k tets/s whole, "
          f"{r['tets'] / max(r['volume'], 1e-9) / 1e3:.1f} k tets/s volume stage")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=float, default=0.2, help="millions of tetrahedra (default 0.2)")
    ap.add_argument("--stuck", action="store_true", help="the issue-15 arc, optimiser inside and after generate")
    ap.add_argument("--build", action="store_true", help="whole builds of the ~1 M-tet spiral, one per --root")
    ap.add_argument("--root", action="append", type=Path, help="source tree for --build (repeatable; default this one)")
    ap.add_argument("--child-build", action="store_true", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child_build:
        import json

        print(json.dumps(_child_build()))
        return
    if args.build:
        whole_builds(args.root or [HERE.parent])
        return
    from chanmesh.design import loads_design
    from chanmesh.meshing.tet import estimate_tet_cells

    if args.stuck:
        d = loads_design(STUCK)
        print(f"estimate {estimate_tet_cells(d):,} tets")
        show("optimiser after generate", timed_mesh(d, 1.0, optimise_after=True))
        print("optimiser inside generate (as chanmesh meshes): may not finish; Ctrl-C to stop", flush=True)
        show("optimiser inside generate", timed_mesh(d, 1.0))
        return
    sys.path.insert(0, str(HERE))
    from hex_speed import SPIRAL

    d = loads_design(SPIRAL)
    d = replace(d, mesh=replace(d.mesh, cells="tet", first_cell=None, wall_ratio=1.2))
    lo, hi = 0.05, 20.0
    for _ in range(30):
        mid = (lo * hi) ** 0.5
        lo, hi = (mid, hi) if estimate_tet_cells(d, mid) < args.cells * 1e6 else (lo, mid)
    print(f"spiral at scale {hi:.3f}: estimate {estimate_tet_cells(d, hi):,} tets")
    show("spiral", timed_mesh(d, hi))


if __name__ == "__main__":
    main()
