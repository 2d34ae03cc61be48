"""``chanmesh dean DESIGN --at STATION``: the fully developed flow of the design's own section at a
station's local radius of curvature: streamwise profile, pressure gradient, secondary (Dean) flow
and its vortex cells; a flow range gives the design's working window."""

from __future__ import annotations

import argparse
import dataclasses
from pathlib import Path

from chanmesh.design.load import load_design
from chanmesh.design.model import FlowSpec
from chanmesh.units import parse_flow_rate, parse_velocity

NAME = "dean"
HELP = "solve the fully developed (Dean) flow of the design's section at a station, or over a flow range"
ORDER = 35


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML)")
    p.add_argument("--at", required=True, metavar="STATION",
                   help="station: fraction (0.5), arc length (12.5mm), angle (90deg) or turn=2.25")
    rate = p.add_mutually_exclusive_group()
    rate.add_argument("--flow", metavar="RATE",
                      help="flow rate, e.g. 1.2mL/min, or a range FIRST:LAST:COUNT, e.g. 0.2mL/min:2mL/min:12 "
                           "(default: the design's [flow])")
    rate.add_argument("--velocity", metavar="U", help="mean velocity, e.g. 0.3m/s, or a range 0.1m/s:1m/s:10")
    p.add_argument("--out", type=Path, default=None, help="output folder (default out/<name>-dean)")
    p.add_argument("--cells-across", type=int, default=None, metavar="N", help="section grid: cells across the width")
    p.add_argument("--cells-high", type=int, default=None, metavar="N", help="section grid: cells over the height")
    p.add_argument("--branch", choices=("primary", "four-cell"), default="primary",
                   help="primary (default: the flow reached from rest) or four-cell (a bent rectangle's symmetric "
                        "four-cell state, unstable; refused when there is none at this flow)")


def _flow(design_flow: FlowSpec, args: argparse.Namespace, area: float) -> tuple[FlowSpec, list[float] | None]:
    from chanmesh.flow.station import parse_range

    if args.flow is not None:
        rates = parse_range("--flow", args.flow, area)
        if rates is None:
            return dataclasses.replace(design_flow, rate=parse_flow_rate("--flow", args.flow), velocity=None), None
        return dataclasses.replace(design_flow, rate=rates[-1], velocity=None), rates
    if args.velocity is not None:
        rates = parse_range("--velocity", args.velocity, area)
        if rates is None:
            return dataclasses.replace(design_flow, velocity=parse_velocity("--velocity", args.velocity), rate=None), None
        return dataclasses.replace(design_flow, rate=rates[-1], velocity=None), rates
    return design_flow, None


def _where(problem) -> str:  # type: ignore[no-untyped-def]
    if problem.radius is None:
        return "straight duct (no curvature here)"
    turn = "left" if problem.radius > 0 else "right"
    return f"bent at R = {abs(problem.radius) * 1e3:.4g} mm (local radius of curvature, turning {turn})"


def run(args: argparse.Namespace) -> int:
    from chanmesh.flow.files import write_dean, write_range
    from chanmesh.flow.station import (correlation_comparison, flow_rate_of, grid_for, solve_station,
                                       solve_station_range, station_problem)
    from chanmesh.geometry.section import section_shape_of

    design = load_design(args.design)
    area = section_shape_of(design).area
    flow, rates = _flow(design.flow, args, area)
    problem = station_problem(design, args.at, flow)
    rate = flow_rate_of(flow, area)
    grid = grid_for(problem, args.cells_across, args.cells_high)
    out = args.out or Path("out") / f"{design.name}-dean"
    where = _where(problem)
    sec = problem.shape
    print(f"{design.name}: station {args.at} (s = {problem.frame.s * 1e3:.4g} mm), {where}")
    print(f"  section {sec.width * 1e6:.4g} um wide, {sec.h_inner * 1e6:.4g}"
          + (f"/{sec.h_outer * 1e6:.4g}" if sec.h_outer != sec.h_inner else "")
          + f" um high; {problem.fluid.name}, rho {problem.fluid.density:.5g} kg/m3, mu {problem.fluid.viscosity * 1e3:.4g} mPa s")
    if rates is not None:
        flows = solve_station_range(problem, rates, grid, branch=args.branch)
        title = f"{design.name} at {args.at}: {where}"
        files = write_range(flows, problem, out, design.name, title)
        print(f"  {'mL/min':>8} {'Re':>7} {'De':>7} {'sec max':>9} {'sec mean':>9} {'peak u':>8} {'cells':>5}")
        for f in flows:
            de = "-" if f.dean is None else f"{f.dean:.3g}"
            print(f"  {f.flow_rate * 6e7:>8.4g} {f.reynolds:>7.3g} {de:>7} {f.secondary_max * 1e3:>6.3g} mm/s "
                  f"{f.secondary_mean * 1e3:>6.3g} mm/s {f.u_of_streamwise_max * 1e6:>5.3g} um {f.cell_count:>5}")
        print(f"wrote {', '.join(p.name for p in files)} in {out}")
        return 0
    f = solve_station(problem, rate, grid, branch=args.branch)
    title = f"{design.name} at {args.at}: {where}"
    files = write_dean(f, problem, out, design.name, title)
    print(f"  flow {f.flow_rate * 6e7:.4g} mL/min, mean {f.mean_velocity:.4g} m/s, Re = {f.reynolds:.4g}"
          + ("" if f.dean is None else f", De = {f.dean:.4g} (Re sqrt(D_h / 2R))"))
    print(f"  streamwise max {f.max_streamwise:.4g} m/s at u = {f.u_of_streamwise_max * 1e6:+.3g} um "
          f"(u > 0 toward the {problem.wall_names[1]})")
    print(f"  pressure gradient {f.dpds / 1e3:.4g} kPa/m = {f.dpds_ratio:.5g} x the straight duct's ({f.dpds_straight / 1e3:.4g} kPa/m)")
    if f.radius is None:
        print("  secondary flow: none (a straight duct has no Dean flow)")
    else:
        print(f"  secondary flow: max {f.secondary_max * 1e3:.4g} mm/s, mean {f.secondary_mean * 1e3:.4g} mm/s (computed)")
    comp = correlation_comparison(f)
    if comp:
        print(f"  correlation U_Dean = 1.8e-4 De^1.63 (Ookawara et al. 2004): {comp['correlation_dean_velocity_m_s'] * 1e3:.4g} mm/s "
              f"= {comp['correlation_over_computed_mean']:.3g} x the computed mean")
    for k, v in enumerate(f.vortices, start=1):
        print(f"  vortex {k}: u = {v['centre_u_m'] * 1e6:+.2f} um, z = {v['centre_z_m'] * 1e6:+.2f} um, {v['sense']} "
              "looking downstream")
    err = (f.error or {}).get("relative") if f.error else None
    g = f.grid
    print(f"  grid {g['description']}, {g['element']}, {f.solver['solve_seconds']:.2g} s"
          + ("; estimated relative error: " + ", ".join(f"{k} {v:.1e}" for k, v in err.items() if v is not None)
             if err else ""))
    print(f"wrote {', '.join(p.name for p in files)} in {out}")
    print("  fully developed flow is an idealisation: not reached in short bends, U-turns, chambers or entrance regions")
    return 0
