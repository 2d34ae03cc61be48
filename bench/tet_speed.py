"""Where a tetrahedral build spends its time: solid, surface (1D/2D) and volume (3D) meshing
under the background size field, gmsh's optimiser, extraction (issue 14: a 1 M-tet build at
least 3x faster than before; issue 15 item 4: the thin arc that kept gmsh busy).

Run:  PYTHONPATH=$PWD python bench/tet_speed.py [--cells 0.2] [--stuck]

``--cells`` refines the bench spiral (bench/hex_speed.py, as tetrahedra with wall_ratio 1.2)
to about that many million tetrahedra (bisection on the estimate). ``--stuck`` instead meshes
the 30 x 12 um arc of issue 15 item 4 with the optimiser inside ``generate`` and after it.
Each run is in-process (not the child process of meshing/tet_process.py) so that the stages
can be timed; gmsh's own ``generate(2)`` then ``generate(3)`` split the surface from the volume.
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


def timed_mesh(design, scale: float, optimise_after: bool = False) -> dict:  # type: ignore[no-untyped-def]
    import gmsh

    from chanmesh.meshing import tet

    stamps: dict[str, float] = {}
    original = gmsh.model.mesh.generate

    def generate(dim: int) -> None:
        stamps["meshing"] = time.perf_counter()
        if optimise_after:
            gmsh.option.setNumber("Mesh.Optimize", 0)
        original(2)
        stamps["surface done"] = time.perf_counter()
        original(3)
        stamps["volume done"] = time.perf_counter()
        if optimise_after:
            gmsh.model.mesh.optimize("")
        stamps["optimised"] = time.perf_counter()

    gmsh.model.mesh.generate = generate
    try:
        t0 = time.perf_counter()
        mesh = tet.mesh_tet(design, scale=scale)
        t1 = time.perf_counter()
    finally:
        gmsh.model.mesh.generate = original
    return {
        "tets": mesh.n_volume_cells,
        "triangles": mesh.cell_counts().get("triangle", 0),
        "solid": stamps["meshing"] - t0,
        "surface": stamps["surface done"] - stamps["meshing"],
        "volume": stamps["volume done"] - stamps["surface done"],
        "optimiser": stamps["optimised"] - stamps["volume done"],
        "extract": t1 - stamps["optimised"],
        "total": t1 - t0,
    }


def show(label: str, r: dict) -> None:
    print(f"{label}: {r['tets']:,} tets, {r['triangles']:,} boundary triangles; total {r['total']:.1f} s = "
          f"solid {r['solid']:.1f} + surface {r['surface']:.1f} + volume {r['volume']:.1f} + optimiser "
          f"{r['optimiser']:.1f} + extract {r['extract']:.1f}; {r['tets'] / r['total'] / 1e3:.1f} k tets/s whole, "
          f"{r['tets'] / max(r['volume'], 1e-9) / 1e3:.1f} k tets/s volume stage")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=float, default=0.2, help="millions of tetrahedra (default 0.2)")
    ap.add_argument("--stuck", action="store_true", help="the issue-15 arc, optimiser inside and after generate")
    args = ap.parse_args()
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
