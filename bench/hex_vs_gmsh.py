"""numpy sweep against gmsh's structured machinery for the same structured hexahedra.

Run:  PYTHONPATH=$PWD /tmp/venv/bin/python bench/hex_vs_gmsh.py [--cells 1]

gmsh cannot extrude a structured mesh along a general (spiral) path, so the comparison is
on an arc, where gmsh has its fastest structured route: a transfinite, recombined quad
section (graded with Progression / Bump coefficients) revolved with ``numElements`` layers
and ``recombine=True``. Both produce the same counts across, high and along; the gmsh time
includes reading nodes and elements back into numpy (what chanmesh would have to do).
The design is a made-up arc of our own.
"""

from __future__ import annotations

import argparse
import math
import time

import numpy as np

from _designs import bench_design_text

ARC = bench_design_text(
    "bench-arc",
    """
kind = "arc"
radius = 2000
angle = 180
""",
    """
cells = "hex"
cells_across = 40
wall_ratio = 1.1
max_cells = 50000000
""",
)


def numpy_sweep(design, scale):  # type: ignore[no-untyped-def]
    from chanmesh.meshing.hex import mesh_hex

    t0 = time.perf_counter()
    mesh = mesh_hex(design, scale=scale)
    return time.perf_counter() - t0, mesh


def _arc_mm(design) -> tuple[float, float, float]:  # type: ignore[no-untyped-def]
    from chanmesh.gmshlayer.session import MODEL_UNIT

    return design.section.width / MODEL_UNIT, design.section.height / MODEL_UNIT, design.path.radius / MODEL_UNIT


def _generate_and_read() -> int:
    """Mesh the model and read nodes and hexahedra back into numpy, as chanmesh would."""
    import gmsh

    gmsh.model.mesh.generate(3)
    tags, coords, _ = gmsh.model.mesh.getNodes()
    types, _, conn = gmsh.model.mesh.getElements(3)
    cells = np.concatenate([c for t, c in zip(types, conn) if t == 5]).reshape(-1, 8)
    points = coords.reshape(-1, 3)[np.argsort(tags)]
    return len(np.searchsorted(np.sort(tags), cells)) if len(points) else 0


def gmsh_revolve(design, counts: tuple[int, int, int], ratio: float) -> tuple[float, int]:  # type: ignore[no-untyped-def]
    import gmsh

    from chanmesh.gmshlayer.session import gmsh_session

    nk, ni, nj = counts
    w, h, R = _arc_mm(design)
    with gmsh_session(threads=2):
        t0 = time.perf_counter()
        geo = gmsh.model.geo
        p = [geo.addPoint(R - w / 2, 0, -h / 2), geo.addPoint(R + w / 2, 0, -h / 2),
             geo.addPoint(R + w / 2, 0, h / 2), geo.addPoint(R - w / 2, 0, h / 2)]
        lines = [geo.addLine(p[i], p[(i + 1) % 4]) for i in range(4)]
        loop = geo.addCurveLoop(lines)
        surf = geo.addPlaneSurface([loop])
        # Bump with coefficient < 1 clusters toward both ends (symmetric), as the numpy grid does
        bump = 1.0 / ratio ** (ni / 4)
        for c, n in zip(lines, (ni, nj, ni, nj)):
            geo.mesh.setTransfiniteCurve(c, n + 1, "Bump", bump)
        geo.mesh.setTransfiniteSurface(surf)
        geo.mesh.setRecombine(2, surf)
        geo.revolve([(2, surf)], 0, 0, 0, 0, 0, 1, math.radians(design.path.angle), numElements=[nk], recombine=True)
        geo.synchronize()
        count = _generate_and_read()
        return time.perf_counter() - t0, count


def gmsh_transfinite(design, counts: tuple[int, int, int], ratio: float) -> tuple[float, int]:  # type: ignore[no-untyped-def]
    """The same arc as an OpenCASCADE solid meshed as a transfinite volume."""
    import gmsh

    from chanmesh.gmshlayer.session import gmsh_session

    nk, ni, nj = counts
    w, h, R = _arc_mm(design)
    with gmsh_session(threads=2):
        t0 = time.perf_counter()
        occ = gmsh.model.occ
        rect = occ.addRectangle(R - w / 2, -h / 2, 0, w, h)
        occ.rotate([(2, rect)], 0, 0, 0, 1, 0, 0, math.pi / 2)
        occ.revolve([(2, rect)], 0, 0, 0, 0, 0, 1, math.radians(design.path.angle))
        occ.synchronize()
        bump = 1.0 / ratio ** (ni / 4)
        for _, c in gmsh.model.getEntities(1):
            lo, hi = np.array(gmsh.model.getBoundingBox(1, c)).reshape(2, 3)
            span = hi - lo
            if span[2] > 0.5 * h:
                gmsh.model.mesh.setTransfiniteCurve(c, nj + 1, "Bump", 1.0 / ratio ** (nj / 4))
            elif np.hypot(span[0], span[1]) < 1.01 * w and abs(np.hypot(*lo[:2]) - np.hypot(*hi[:2])) > 0.5 * w:
                gmsh.model.mesh.setTransfiniteCurve(c, ni + 1, "Bump", bump)
            else:
                gmsh.model.mesh.setTransfiniteCurve(c, nk + 1)
        for _, sf in gmsh.model.getEntities(2):
            gmsh.model.mesh.setTransfiniteSurface(sf)
            gmsh.model.mesh.setRecombine(2, sf)
        for _, v in gmsh.model.getEntities(3):
            gmsh.model.mesh.setTransfiniteVolume(v)
        count = _generate_and_read()
        return time.perf_counter() - t0, count


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cells", type=float, nargs="+", default=[0.3, 1.0, 3.0], help="millions of hexahedra")
    args = ap.parse_args()
    from chanmesh.design import loads_design
    from chanmesh.meshing.hex import estimate_hex_cells

    design = loads_design(ARC)
    print(f"{'hexahedra':>11} {'numpy s':>8} {'M/s':>6} {'revolve s':>9} {'M/s':>6} {'transfinite s':>13} {'M/s':>6}")
    for millions in args.cells:
        scale = (millions * 1e6 / estimate_hex_cells(design)) ** (1 / 3)
        t_np = min(numpy_sweep(design, scale)[0] for _ in range(2))
        _, mesh = numpy_sweep(design, scale)
        counts = (mesh.info["cells_along"], mesh.info["cells_across"], mesh.info["cells_high"])
        t_g, n_g = gmsh_revolve(design, counts, mesh.info["growth_ratio"])
        n = mesh.n_volume_cells
        t_t, n_t = gmsh_transfinite(design, counts, mesh.info["growth_ratio"])
        assert n_g == n == n_t, (n_g, n, n_t)
        print(f"{n:>11,} {t_np:>8.2f} {n / t_np / 1e6:>6.2f} {t_g:>9.2f} {n / t_g / 1e6:>6.2f} {t_t:>13.2f} {n / t_t / 1e6:>6.2f}")


if __name__ == "__main__":
    main()
