"""Fully developed flow in a bent (or straight) duct at a prescribed flow rate: the problem set
up in dimensionless form, solved by ``newton`` (bordered Newton, tangent continuation in the flow
rate, a long-jump fallback), and the solution turned into a ``SectionFlow`` with its vortex cells
and a Richardson error estimate. Dimensionless inside with the viscous velocity scale nu / L
(L = D_h), so the continuation parameter is the dimensionless flow rate itself.
"""

from __future__ import annotations

import math
import threading
import time
from collections import OrderedDict
from typing import Any, Callable, Sequence

import numpy as np

from chanmesh.errors import ChanmeshError
from chanmesh.flow import equations as eq
from chanmesh.flow.discrete import Discrete, discretise, mirror_basis, solve_free
from chanmesh.flow.newton import Counts, FlowNotConverged, Point, by_jumps, continuation
from chanmesh.flow.grid import SectionGrid, default_grid, mirrored, shape_of
from chanmesh.flow.result import SectionFlow, find_vortices, neighbours, refine_extremum
from chanmesh.numbers.regime import dean_number

PSI_FLOOR = 1e-9
"""No vortex cells are reported when max |psi| is below this fraction of U D_h (a still section)."""
BRANCHES = ("primary", "four-cell")
"""``branch``: "primary" = the flow continuation from rest reaches (two cells in a square duct);
"four-cell" = the symmetric four-cell state of a bent rectangular duct (``flow.branch``)."""
FOUR_CELL_START = 0.125
"""The four-cell search follows the symmetric branch from this fraction of the flow rate asked
for (a Dean number where the flow is unique)."""
ORDER_ASSUMED = 2.0
"""Convergence order assumed by the Richardson error estimate. Measured on three grids
(tests/test_flow_reference.py): 2.9 for the mean secondary speed, above 5 for dp/ds; the nodal
maxima converge irregularly (sampled at nodes), so 2 is the cautious choice."""


def _straight_gradient(d: Discrete, q: float) -> float:
    """Dimensionless G of the straight duct carrying ``q`` (Poisson, same grid and element)."""
    k = eq.poisson.assemble(d.scalar)
    f = eq.unit_load.assemble(d.scalar)
    w = solve_free(k.tocsr(), f, d.scalar_free)
    return q / float(f @ w)


def _stream_function(d: Discrete, kappa: float, un: np.ndarray, uz: np.ndarray) -> np.ndarray:
    lhs, rhs = eq.stream_forms(kappa)
    a = lhs.assemble(d.scalar)
    b = rhs.assemble(d.scalar, un=d.scalar.interpolate(un), uz=d.scalar.interpolate(uz))
    return solve_free(a.tocsr(), b, d.scalar_free)


def solve_section_flow(section: Any, radius: float | None, density: float, viscosity: float, flow_rate: float,
                       grid: SectionGrid | None = None, discretisation: str = "reference", initial: SectionFlow | None = None,
                       estimate_error: bool | None = None, branch: str = "primary") -> SectionFlow:
    """Fully developed laminar flow of ``section`` bent at ``radius`` (m; None = straight) carrying
    ``flow_rate`` (m^3/s) of a fluid of ``density`` (kg/m^3) and ``viscosity`` (Pa s).

    ``radius`` > 0: centre of curvature on the u < 0 side (a left turn, the README's frame);
    < 0: on the u > 0 side (a right turn). ``grid`` defaults to ``default_grid(section)``.
    ``discretisation``: "reference" (P2-P1) or "grid" (MINI on the grid's own nodes).
    ``initial``: a solution on the same grid and discretisation to start Newton from.
    ``estimate_error`` (default: for the reference on a default grid): Richardson estimate from a
    second grid with half the cells each way.
    ``branch``: "primary", or "four-cell" (a rectangle in a bend only; the grid's triangles are
    mirrored about mid-height and a structured grid with an even number of cells high is needed;
    ``FourCellNotFound`` when there is none at this flow, e.g. below the branch's limit point).
    """
    shape = shape_of(section)
    if branch not in BRANCHES:
        raise ChanmeshError(f"section flow: branch = {branch!r}: must be one of {', '.join(BRANCHES)}")
    for key, value in (("density", density), ("viscosity", viscosity), ("flow rate", flow_rate)):
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise ChanmeshError(f"section flow: {key} = {value!r}: must be a finite number greater than 0")
    if radius is not None and not (math.isfinite(radius) and abs(radius) > 0.5 * shape.width):
        raise ChanmeshError(f"section flow: radius = {radius!r} m: |R| must exceed half the width "
                            f"({0.5 * shape.width * 1e6:.6g} um), or be None for a straight duct")
    made_default = grid is None
    grid = default_grid(shape) if grid is None else grid
    if branch == "four-cell":
        if radius is None or abs(shape.h_outer - shape.h_inner) > 1e-9 * shape.mean_height:
            raise ChanmeshError("section flow: branch = four-cell: needs a bend (a radius) and a rectangular section "
                                "(height_inner = height_outer), whose flow is symmetric about mid-height")
        grid = mirrored(grid)
    if estimate_error is None:
        estimate_error = discretisation == "reference" and made_default

    def solve() -> SectionFlow:
        return _solve(shape, radius, density, viscosity, flow_rate, grid, discretisation, initial, branch)

    if made_default and initial is None:  # the same problem asked twice (a build's numbers and resolution)
        flow = _shared((shape, radius, density, viscosity, flow_rate, discretisation, branch), solve)
    else:
        flow = solve()
    error = None
    if estimate_error:
        error = _richardson(flow, section, grid, radius, density, viscosity, flow_rate, discretisation, branch)
    return _replace(flow, error=error)


SHARED_KEEP = 8
"""Solutions on the default grid kept for a second caller (``_shared``)."""

_SHARED: OrderedDict[tuple, SectionFlow] = OrderedDict()
_SHARED_LOCKS: dict[tuple, threading.Lock] = {}
_SHARED_GUARD = threading.Lock()


def _shared(key: tuple, solve: Callable[[], SectionFlow]) -> SectionFlow:
    """``solve()`` once per ``key``: a second caller gets the same solution, and one that asks
    while the first is solving waits for it instead of solving again (a build asks for the
    same default-grid flow in its numbers and, on its second thread, in its resolution figure)."""
    with _SHARED_GUARD:
        lock = _SHARED_LOCKS.setdefault(key, threading.Lock())
    with lock:
        with _SHARED_GUARD:
            if key in _SHARED:
                _SHARED.move_to_end(key)
                return _SHARED[key]
        flow = solve()  # a failure is not kept: the next caller tries again
        with _SHARED_GUARD:
            _SHARED[key] = flow
            while len(_SHARED) > SHARED_KEEP:
                old, _ = _SHARED.popitem(last=False)
                _SHARED_LOCKS.pop(old, None)
        return flow


def _solve(shape: Any, radius: float | None, density: float, viscosity: float, flow_rate: float, grid: SectionGrid,
           discretisation: str, initial: SectionFlow | None, branch: str) -> SectionFlow:
    """The solve itself on ``grid`` (already mirrored for the four-cell branch):
    ``solve_section_flow`` without its checks and error estimate."""
    t0 = time.perf_counter()
    length = shape.hydraulic_diameter
    d = discretise(grid, discretisation, length)
    scale_v = viscosity / (density * length)  # m/s per dimensionless velocity
    q_target = flow_rate / (scale_v * length**2)
    kappa = 0.0 if radius is None else length / radius
    u_mean = flow_rate / shape.area
    re = density * u_mean * length / viscosity
    de_of = (lambda q: None) if radius is None else (
        lambda q: dean_number(re * q / q_target, length, abs(radius)))

    def describe(q_done: float, q_want: float) -> str:
        got = q_done * scale_v * length**2
        de = de_of(q_done)
        return (f"section flow did not converge: Newton with continuation reached {got * 6e7:.4g} mL/min"
                + (f" (De = {de:.4g})" if de is not None else "")
                + f" of the {flow_rate * 6e7:.4g} mL/min asked"
                + (f" (De = {de_of(q_want):.4g})" if radius is not None else "")
                + "; the fully developed state may not exist or be unstable there: try a lower flow or a finer grid")

    start = Point(np.zeros(d.size), 0.0, 0.0)  # rest: Newton's first step is the Stokes solution
    if initial is not None and initial.state is not None and initial.state["n"] == d.size \
            and initial.state["kind"] == discretisation:
        start = _point_of(initial, scale_v, viscosity * scale_v / length**2, length)
    counts = Counts()
    extra: dict[str, Any] = {"branch": branch}
    if branch == "four-cell":
        from chanmesh.flow.branch import FourCellNotFound, four_cell  # only here: numbers' solve does without

        d.reduced = mirror_basis(d)
        if start.q <= 0 or start.q >= q_target or (initial is not None and initial.solver.get("branch") != "four-cell"):
            start = continuation(d, kappa, FOUR_CELL_START * q_target, Point(np.zeros(d.size), 0.0, 0.0), counts,
                                 describe)

        def cells(x: np.ndarray) -> int:
            nv = d.scalar.N
            psi = _stream_function(d, kappa, x[:nv], x[2 * nv:3 * nv])[d.node_dofs] * scale_v * length
            return len(find_vortices(d.out_points * length, d.out_triangles, psi, d.wall_nodes,
                                     floor=PSI_FLOOR * u_mean * length))

        try:
            end, found = four_cell(d, kappa, q_target, start, cells, counts)
        except FourCellNotFound as exc:
            folds = ", ".join(f"{de_of(f * q_target):.4g}" for f in exc.folds)
            passed = f"limit points of the symmetric branch passed at De = {folds}" if folds else \
                "no limit point of the symmetric branch below this flow"
            raise FourCellNotFound(
                f"section flow: no four-cell state found at {flow_rate * 6e7:.4g} mL/min (De = {de_of(q_target):.4g}) "
                f"on this grid ({passed}); four-cell flows exist "
                "only above a Dean number (Winters 1987): try a higher flow, or the primary branch") from None
        extra["limit_points_dean"] = [de_of(f * q_target) for f in found["limit_points_flow_ratio"]]
        extra["full_residual"] = float(np.max(np.abs(eq.residual(d.tables, kappa, end.x, end.g)[d.free])))
    else:
        try:
            end = continuation(d, kappa, q_target, start, counts, describe)
        except FlowNotConverged:
            end = by_jumps(d, kappa, q_target, start, counts, describe)
    x, g = end.x, end.g
    info: dict[str, Any] = {**counts.as_dict(), **extra}
    g_straight = _straight_gradient(d, q_target)
    flow = _assemble_result(d, shape, radius, density, viscosity, flow_rate, kappa, x, g, g_straight,
                            scale_v, re, grid, discretisation, end)
    info["solve_seconds"] = time.perf_counter() - t0
    info["method"] = ("bordered Newton on (velocity, pressure, G) with the flow-rate condition as the extra "
                      "equation (sparse LU, SuperLU; chord steps near convergence); continuation in the flow "
                      "rate along the tangent"
                      + ("; four-cell branch: pseudo-arclength continuation of the mirror-symmetric states in the "
                         "flow rate round the limit points (flow/branch.py)" if branch == "four-cell" else ""))
    return _replace(flow, solver=info, error=None)


def _point_of(flow: SectionFlow, scale_v: float, g_scale: float, length: float) -> Point:
    """A continuation start from an earlier solution's state (SI) in this solve's scales."""
    st = flow.state
    per_q = scale_v * length**2
    q = flow.flow_rate / per_q
    dx = st.get("dx_dq")
    dg = st.get("dg_dq")
    if dx is None or dg is None:
        return Point(st["x"] / scale_v, st["g"] / g_scale, q)
    return Point(st["x"] / scale_v, st["g"] / g_scale, q, dx * per_q / scale_v, dg * per_q / g_scale)


def _replace(flow: SectionFlow, **changes: Any) -> SectionFlow:
    import dataclasses

    return dataclasses.replace(flow, **changes)


def _assemble_result(d: Discrete, shape: Any, radius: float | None, density: float, viscosity: float, flow_rate: float,
                     kappa: float, x: np.ndarray, g: float, g_straight: float, scale_v: float, re: float,
                     grid: SectionGrid, discretisation: str, tangent: Point | None = None) -> SectionFlow:
    L = d.length
    nv = d.scalar.N
    un, wt, uz = x[:nv], x[nv:2 * nv], x[2 * nv:3 * nv]
    nodes = d.node_dofs
    pts = d.out_points * L
    stream = wt[nodes] * scale_v
    sec_u, sec_z = un[nodes] * scale_v, uz[nodes] * scale_v
    psi = _stream_function(d, kappa, un, uz)[nodes] * scale_v * L
    speed = np.hypot(sec_u, sec_z)
    area_nd = float(np.sum(d.tables.dx))  # the grid's area (exact for straight-sided cells)
    mean_speed = float(eq.in_plane_speed.assemble(d.scalar, un=d.scalar.interpolate(un), uz=d.scalar.interpolate(uz)))
    mean_speed = mean_speed / area_nd * scale_v
    peak_u, peak_z = _peak(pts, stream, d.out_triangles)
    g_scale = viscosity * scale_v / L**2  # Pa/m per dimensionless G
    boundary = d.wall_nodes
    u_mean = flow_rate / shape.area
    vortices = find_vortices(pts, d.out_triangles, psi, boundary, floor=PSI_FLOOR * u_mean * L)
    de = None if radius is None else dean_number(re, L, abs(radius))
    state = {"x": x * scale_v, "g": g * g_scale, "n": d.size, "kind": discretisation}
    if tangent is not None and tangent.dx is not None and tangent.dg is not None:
        per_q = scale_v * L**2  # m^3/s per dimensionless flow rate
        state["dx_dq"] = tangent.dx * scale_v / per_q
        state["dg_dq"] = tangent.dg * g_scale / per_q
    grid_info = {**grid.to_dict(), "element": "P2-P1 Taylor-Hood" if discretisation == "reference" else "MINI (P1+bubble)-P1",
                 "velocity_nodes": int(len(nodes))}
    return SectionFlow(
        flow_rate=flow_rate, mean_velocity=u_mean, max_streamwise=float(stream.max()),
        u_of_streamwise_max=peak_u, z_of_streamwise_max=peak_z,
        dpds=g * g_scale, dpds_straight=g_straight * g_scale, dpds_ratio=g / g_straight,
        secondary_max=float(speed.max()), secondary_mean=mean_speed, vortices=tuple(vortices),
        reynolds=re, dean=de, radius=radius, hydraulic_diameter=L, area=shape.area,
        density=density, viscosity=viscosity, discretisation=discretisation, grid=grid_info, error=None, solver={},
        points=pts, triangles=d.out_triangles, streamwise=stream, secondary_u=sec_u, secondary_z=sec_z,
        stream_function=psi, state=state,
    )


PEAK_BAND = 0.002
"""The streamwise peak is located as the centroid of the nodes within this fraction of the
maximum, weighted by their excess over that level: stable where the profile is flat-topped
(wide sections) and the refined maximum itself where it is peaked."""


def _peak(pts: np.ndarray, w: np.ndarray, triangles: np.ndarray) -> tuple[float, float]:
    k = int(np.argmax(w))
    level = w[k] * (1.0 - PEAK_BAND)
    top = w > level
    if np.count_nonzero(top) >= 6:
        weight = w[top] - level
        c = (pts[top] * weight[:, None]).sum(axis=0) / weight.sum()
        return float(c[0]), float(c[1])
    return refine_extremum(pts, w, k, neighbours(triangles, len(pts)))


ERROR_KEYS = ("secondary_max", "secondary_mean", "dpds", "max_streamwise")


def _richardson(flow: SectionFlow, section: Any, grid: SectionGrid, radius: float | None, density: float,
                viscosity: float, flow_rate: float, discretisation: str, branch: str = "primary") -> dict[str, Any] | None:
    """Relative error estimates |f_h - f_2h| / (2^p - 1) / |f_h| from a grid with half the cells."""
    from chanmesh.flow.branch import FourCellNotFound

    if grid.shape is None:
        return {"method": "not estimated: the grid is not structured", "relative": None}
    nx, nz = grid.shape
    coarse_grid = default_grid(section, max(2, nx // 2), max(2, nz // 2))
    try:
        coarse = solve_section_flow(section, radius, density, viscosity, flow_rate, coarse_grid, discretisation,
                                    estimate_error=False, branch=branch)
    except FourCellNotFound:
        return {"method": f"not estimated: no four-cell state on the coarse grid {coarse_grid.description}",
                "relative": None}
    factor = 2.0**ORDER_ASSUMED - 1.0
    rel = {}
    still = flow.radius is None  # no secondary flow: its relative error is round-off over round-off
    for key in ERROR_KEYS:
        fine, rough = getattr(flow, key), getattr(coarse, key)
        rel[key] = None if (still and key.startswith("secondary")) or not fine else abs(fine - rough) / factor / abs(fine)
    return {
        "method": (f"Richardson: |f(h) - f(2h)| / (2^p - 1) / |f(h)| with p = {ORDER_ASSUMED:g} (assumed; "
                   f"cautious against the measured 2.9 for the mean secondary speed), coarse grid {coarse_grid.description}"),
        "relative": rel,
        "coarse_values": {k: getattr(coarse, k) for k in ERROR_KEYS},
        "coarse_vortex_cells": coarse.cell_count,
    }


def flow_range(section: Any, radius: float | None, density: float, viscosity: float, flow_rates: Sequence[float],
               grid: SectionGrid | None = None, discretisation: str = "reference",
               estimate_error: bool = False, branch: str = "primary") -> list[SectionFlow]:
    """Solutions at each of ``flow_rates`` (ascending is best), each started from the previous one
    (on the four-cell ``branch``, from the previous four-cell state)."""
    out: list[SectionFlow] = []
    grid = default_grid(shape_of(section)) if grid is None else grid
    prev: SectionFlow | None = None
    for q in flow_rates:
        start = prev if prev is not None and prev.flow_rate <= q else None
        prev = solve_section_flow(section, radius, density, viscosity, float(q), grid, discretisation, start,
                                  estimate_error=estimate_error, branch=branch)
        out.append(prev)
    return out
