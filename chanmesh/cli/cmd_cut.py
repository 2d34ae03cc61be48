"""``chanmesh cut RESULT --design DESIGN --at STATION``: read a solver's velocity on the exact
cross-section at a station, split into streamwise and secondary (Dean) flow."""

from __future__ import annotations

import argparse
from pathlib import Path

from chanmesh.errors import DesignError
from chanmesh.cli.argtypes import finite_float, whole_number

NAME = "cut"
HELP = "sample a result's velocity on the exact section at a station: streamwise and secondary flow"
ORDER = 50
SHOWN_VORTICES = 6  # the terminal lists this many; section.json and section.png have them all


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("result", type=Path,
                   help="solution: an OpenFOAM case folder or its .foam file, XDMF (dolfinx time series too), "
                        "PVD, VTU/PVTU or anything meshio reads")
    p.add_argument("--design", type=Path, required=True, help="the design file the mesh was built from")
    p.add_argument("--at", required=True, metavar="STATION", help="station: 0.5, 12.5mm, 90deg or turn=2.25")
    p.add_argument("--field", help="vector field name (default: the only 3-component field)")
    p.add_argument("--time", type=finite_float, default=None, metavar="T", help="time step to read (default: the last)")
    p.add_argument("--association", choices=("point", "cell"), default=None,
                   help="read the field's point or cell data (default: the one the file has; point if both)")
    p.add_argument("--resolution", type=whole_number, default=100, metavar="N",
                   help="sample intervals across the width, rounded up to even (default 100)")
    p.add_argument("--scale", type=finite_float, default=1.0, help="metres per result length unit (default 1: result in metres)")
    p.add_argument("--no-developed", action="store_true",
                   help="skip the fully developed section flow shown beside the result (designs with [flow])")
    p.add_argument("--out", type=Path, default=None, help="output folder (default: out/<name>/cut-<station>)")


def run(args: argparse.Namespace) -> int:
    from chanmesh.design.load import load_design
    from chanmesh.post.cut import FLOW_TOLERANCE, cut, design_flow_check
    from chanmesh.post.cut_io import write_cut
    from chanmesh.post.result_file import read_result
    from chanmesh.geometry.stations import station_frame

    design = load_design(args.design)
    if not 4 <= args.resolution <= 2000:
        raise DesignError("--resolution", args.resolution, "must be a whole number from 4 to 2000")
    frame = station_frame(design, args.at, "--at")
    result = read_result(args.result, args.field, args.scale, args.time, args.association)
    c = cut(result, design, frame, nu=args.resolution)
    safe = "".join(ch if ch.isalnum() or ch in "._-" else "_" for ch in str(args.at))
    out = args.out or Path("out") / design.name / f"cut-{safe}"
    title = f"{design.name}: section at {args.at} (s = {frame.s * 1e3:.4g} mm), field {result.name}"
    c.figures["design_flow"] = design_flow_check(design, c.figures["flow_rate_m3_s"])
    extra, developed_note = developed(design, c, title, args.no_developed)
    files = write_cut(c, out, title, design.name, result, extra)
    f = c.figures
    print(f"{title}")
    print(f"  read {result.source}: {result.describe()}")
    print(f"  flow rate {f['flow_rate_m3_s'] * 6e7:.5g} mL/min; streamwise mean {f['streamwise_mean_m_s']:.4g} m/s, "
          f"max {f['streamwise_max_m_s']:.4g} m/s")
    check = f["design_flow"]
    if check is not None:
        line = (f"  design flow rate {check['design_m3_s'] * 6e7:.5g} mL/min: the section carries "
                f"{100 * check['relative_difference']:+.2f} %")
        print(line + (f"  WARNING: more than {100 * FLOW_TOLERANCE:g} % off; check convergence, the mesh and the "
                      "inlet condition" if check["warning"] else ""))
    ratio = f["secondary_mean_over_streamwise_mean"]
    print(f"  secondary max {f['secondary_max_m_s']:.4g} m/s, mean {f['secondary_mean_m_s']:.4g} m/s"
          + (f" ({ratio:.3g} of the mean streamwise speed)" if ratio is not None else " (no net streamwise flow)"))
    vortices = f["vortices"]
    for k, v in enumerate(vortices[:SHOWN_VORTICES], start=1):
        print(f"  vortex {k}: u = {v['u_m'] * 1e6:+.2f} um, z = {v['z_m'] * 1e6:+.2f} um, {v['sense']} (looking downstream)")
    if len(vortices) > SHOWN_VORTICES:
        print(f"  ... and {len(vortices) - SHOWN_VORTICES} more in section.json (and section.png)")
    if not vortices:
        print("  no vortex: the in-plane stream function has no interior extremum above 10 % of its largest")
    print(developed_note)
    cen = f["centring"]
    print(f"  centring: grid centroid {cen['grid_centroid_to_centreline_point_m']:.2e} m from the centreline point, "
          f"plane normal {cen['plane_normal_to_tangent_rad']:.2e} rad from the tangent")
    print(f"wrote {', '.join(p.name for p in files)} in {out}")
    return 0


def developed(design, c, title: str, skip: bool) -> tuple[dict[str, bytes], str]:  # noqa: ANN001
    """The fully developed comparison (figures into ``c.figures['developed']``), the picture to
    write and the terminal lines."""
    from chanmesh.post.cut_developed import compare, developed_flow, developed_reason, render_comparison_png

    reason = "skipped (--no-developed)" if skip else developed_reason(design, c)
    if reason is None:
        from chanmesh.flow import FlowNotConverged

        try:
            sf = developed_flow(design, c)
        except FlowNotConverged as exc:
            reason = f"not available: {exc}"
    if reason is not None:
        c.figures["developed"] = {"skipped": reason}
        return {}, f"  fully developed comparison: {reason}"
    d = compare(c, sf)
    c.figures["developed"] = d
    diff = d["cut_minus_developed"]
    lines = [f"  fully developed at this station (chanmesh.flow, same flow rate"
             + (f", De = {d['dean']:.3g}" if d["dean"] is not None else ", straight") + "): "
             f"secondary max {d['secondary_max_m_s']:.4g} m/s ({100 * diff['secondary_max_relative']:+.1f} % here), "
             f"mean {d['secondary_mean_m_s']:.4g} m/s ({100 * diff['secondary_mean_relative']:+.1f} % here)"]
    for k, pair in enumerate(d["vortex_pairs"], start=1):
        v = pair["developed"]
        where = (f"the result's nearest {v['sense']} centre is {pair['distance_m'] * 1e6:.2f} um away"
                 if pair["cut"] is not None else f"no {v['sense']} centre in the result")
        lines.append(f"    developed vortex {k}: u = {v['u_m'] * 1e6:+.2f} um, z = {v['z_m'] * 1e6:+.2f} um, "
                     f"{v['sense']}; {where}")
    lines.append("    picture: section_vs_developed.png")
    png = render_comparison_png(c, sf, title)
    return {"section_vs_developed.png": png}, "\n".join(lines)
