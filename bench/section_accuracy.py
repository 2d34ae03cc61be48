"""Accuracy per cell: fully developed duct flow on the inlet face of each mesh.

Run:  PYTHONPATH=$PWD /tmp/venv/bin/python bench/section_accuracy.py

The inlet face of a mesh is a mesh of the cross-section. On it, -lap(u) = 1 with u = 0 on the
edges is solved with scikit-fem (bilinear quads on the graded hexahedral section, linear
triangles on gmsh's section mesh graded by the same h(d) as the tetrahedral path), and the
flow rate Q = integral of u is compared with the exact series for a rectangle of width w and
height h (White 2006, Viscous Fluid Flow, 3rd ed., eq. 3-48; the same series is in Shah &
London 1978, ch. VII), written for unit pressure gradient over viscosity:

    Q = (w h^3 / 12) [1 - (192 h / (pi^5 w)) sum_{n odd} tanh(n pi w / (2 h)) / n^5]

Both families refine with the convergence-family rule (counts x scale, growth ratio to its
scale-th root). Target: the graded section reaches 0.1 % with at least 5x fewer cells.
The section is a made-up one of our own (300 x 60 um).
"""

from __future__ import annotations

import math

import numpy as np

from _designs import bench_design_text

DESIGN = bench_design_text(
    "bench-section",
    """
kind = "arc"
radius = 2000
angle = 5
""",
    """
cells = "hex"
cells_along = 1
""",
)
# The hexahedral section: few cells across (graded hard toward the side walls, where the
# profile bends) and more over the short height (where the profile is a parabola).
HEX_MESH = "cells_across = 8\ncells_high = 10\nfirst_cell = 3\n"
# Triangles: the tetrahedral path's own h(d) for a default-like design, and for the hex one.
TRI_MESHES = {"tri (ratio 1.25)": "cells_across = 10\nwall_ratio = 1.25\n", "tri (first 3 um)": HEX_MESH}


def exact_flow_rate(w: float, h: float, terms: int = 200) -> float:
    """White (2006) eq. 3-48 for -lap(u) = 1 on a w x h rectangle."""
    n = np.arange(1, 2 * terms, 2, dtype=float)
    series = np.sum(np.tanh(n * math.pi * w / (2 * h)) / n**5)
    return w * h**3 / 12.0 * (1.0 - 192.0 * h / (math.pi**5 * w) * series)


def hex_section(design, scale: float) -> tuple[np.ndarray, np.ndarray]:  # type: ignore[no-untyped-def]
    """(u, v) nodes and quads of the hexahedral mesh's inlet face."""
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.meshing.hex import mesh_hex

    mesh = mesh_hex(design, scale=scale)
    quads = mesh.facets_of("inlet")[0].cells
    line = centerline_of(design)
    p0, n0 = line.points(np.array([0.0]))[0], line.normals(np.array([0.0]))[0]
    used, local = np.unique(quads, return_inverse=True)
    pts = mesh.points[used]
    uv = np.column_stack([(pts - p0) @ n0, pts[:, 2]])
    return uv, local.reshape(quads.shape)


def gmsh_section(design, scale: float) -> tuple[np.ndarray, np.ndarray]:  # type: ignore[no-untyped-def]
    """Triangles of the section from gmsh (Frontal-Delaunay, as the tetrahedral path's faces),
    sized by the tetrahedral path's h(d) = min(h1 + (g - 1) d, h_core)."""
    import gmsh

    from chanmesh.sizing import grading_of
    from chanmesh.gmshlayer.session import gmsh_session

    grading = grading_of(design, scale)
    w, h = design.section.width, design.section.height
    unit = 1e-6
    with gmsh_session():
        gmsh.model.occ.addRectangle(-w / 2 / unit, -h / 2 / unit, 0, w / unit, h / unit)
        gmsh.model.occ.synchronize()

        def size(dim, tag, x, y, z, lc):  # type: ignore[no-untyped-def]
            d = min(w / 2 - abs(x * unit), h / 2 - abs(y * unit))
            return float(grading.size(np.array([d]))[0] / unit)

        gmsh.model.mesh.setSizeCallback(size)
        for opt in ("Mesh.MeshSizeExtendFromBoundary", "Mesh.MeshSizeFromPoints", "Mesh.MeshSizeFromCurvature"):
            gmsh.option.setNumber(opt, 0)
        gmsh.option.setNumber("Mesh.Algorithm", 6)
        gmsh.model.mesh.generate(2)
        tags, coords, _ = gmsh.model.mesh.getNodes()
        _, _, conn = gmsh.model.mesh.getElements(2)
        order = np.argsort(tags)
        tri = np.searchsorted(tags[order], conn[0]).reshape(-1, 3)
        return coords.reshape(-1, 3)[order, :2] * unit, tri


def flow_rate(uv: np.ndarray, cells: np.ndarray) -> float:
    from skfem import Basis, ElementQuad1, ElementTriP1, MeshQuad, MeshTri, asm, condense, solve
    from skfem.models.poisson import laplace, unit_load

    quad = cells.shape[1] == 4
    mesh = (MeshQuad if quad else MeshTri)(uv.T.copy(), cells.T.copy())
    basis = Basis(mesh, ElementQuad1() if quad else ElementTriP1())
    K, f = asm(laplace, basis), asm(unit_load, basis)
    u = solve(*condense(K, f, D=basis.get_dofs()))
    return float(f @ u)


def cells_for_error(counts: list[int], errors: list[float], target: float) -> float:
    """Cell count at which the error first falls to ``target`` (log-log interpolation)."""
    c, e = np.log(counts), np.log(errors)
    for k in range(1, len(c)):
        if e[k] <= math.log(target) < e[k - 1]:
            f = (math.log(target) - e[k - 1]) / (e[k] - e[k - 1])
            return float(math.exp(c[k - 1] + f * (c[k] - c[k - 1])))
    return float("nan")


def main() -> None:
    from chanmesh.design import loads_design

    design = loads_design(DESIGN)
    w, h = design.section.width, design.section.height
    exact = exact_flow_rate(w, h)
    # cross-check the series: Shah & London (1978) give fRe = 24 (1 - 1.3553 a + 1.9467 a^2
    # - 1.7012 a^3 + 0.9564 a^4 - 0.2537 a^5) for aspect a = h / w (their eq. 341, within 0.05 %)
    a = h / w
    f_re = 24 * (1 - 1.3553 * a + 1.9467 * a**2 - 1.7012 * a**3 + 0.9564 * a**4 - 0.2537 * a**5)
    dh = 4 * w * h / (2 * (w + h))
    q_shah = w * h * dh**2 / (2 * f_re)  # fRe = G D_h^2 / (2 mu U) with G / mu = 1
    print(f"exact Q = {exact:.6e} m^4 (series); Shah & London fRe fit gives {q_shah:.6e} ({q_shah / exact - 1:+.2e})")
    families = [("hex quads", HEX_MESH, hex_section, (1.0, 1.5, 2.0, 3.0, 4.0, 5.0))]
    families += [(k, m, gmsh_section, (1.0, 2.0, 3.0, 4.0, 6.0, 8.0, 11.0)) for k, m in TRI_MESHES.items()]
    print(f"{'kind':>17} {'scale':>6} {'cells':>8} {'rel. error':>11}")
    need = {}
    for kind, extra, make, scales in families:
        d = loads_design(DESIGN + extra)
        counts, errors = [], []
        for scale in scales:
            uv, cells = make(d, scale)
            err = abs(flow_rate(uv, cells) / exact - 1.0)
            counts.append(len(cells))
            errors.append(err)
            print(f"{kind:>17} {scale:>6.2f} {len(cells):>8,} {err:>11.2e}")
        need[kind] = cells_for_error(counts, errors, 1e-3)
    best_tri = min(v for k, v in need.items() if k.startswith("tri"))
    print("cells for 0.1 %: " + ", ".join(f"{k} {v:,.0f}" for k, v in need.items()))
    print(f"ratio (best triangles / hex quads) {best_tri / need['hex quads']:.1f}x (target >= 5x)")


if __name__ == "__main__":
    main()
