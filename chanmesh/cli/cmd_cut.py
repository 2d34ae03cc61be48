"""``chanmesh cut RESULT --design DESIGN --at STATION``: read a solver's velocity on the exact
cross-section at a station, split into streamwise and secondary (Dean) flow."""

from __future__ import annotations

import argparse
from pathlib import Path

from chanmesh.design.load import load_design
from chanmesh.errors import DesignError
from chanmesh.post.cut import cut
from chanmesh.post.cut_io import write_cut
from chanmesh.post.result_file import read_result
from chanmesh.geometry.stations import station_frame
from chanmesh.cli.argtypes import finite_float, whole_number

NAME = "cut"
HELP = "sample a result's velocity on the exact section at a station: streamwise and secondary flow"
ORDER = 50


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("result", type=Path, help="solution file: VTU, XDMF or anything meshio reads")
    p.add_argument("--design", type=Path, required=True, help="the design file the mesh was built from")
    p.add_argument("--at", required=True, metavar="STATION", help="station: 0.5, 12.5mm, 90deg or turn=2.25")
    p.add_argument("--field", help="vector field name (default: the only 3-component field)")
    p.add_argument("--resolution", type=whole_number, default=100, metavar="N", help="samples across the width (default 100)")
    p.add_argument("--scale", type=finite_float, default=1.0, help="metres per result length unit (default 1: result in metres)")
    p.add_argument("--out", type=Path, default=None, help="output folder (default: out/<name>/cut-<station>)")


def run(args: argparse.Namespace) -> int:
    design = load_design(args.design)
    if not 4 <= args.resolution <= 2000:
        raise DesignError("--resolution", args.resolution, "must be a whole number from 4 to 2000")
    frame = station_frame(design, args.at, "--at")
    result = read_result(args.result, args.field, args.scale)
    c = cut(result, design, frame, nu=args.resolution)
    safe = "".join(ch if ch.isalnum() or ch in "._-" else "_" for ch in str(args.at))
    out = args.out or Path("out") / design.name / f"cut-{safe}"
    title = f"{design.name}: section at {args.at} (s = {frame.s * 1e3:.4g} mm), field {result.name}"
    files = write_cut(c, out, title, design.name, result.name, result.association, result.source)
    f = c.figures
    print(f"{title}")
    print(f"  flow rate {f['flow_rate_m3_s'] * 6e7:.5g} mL/min; streamwise mean {f['streamwise_mean_m_s']:.4g} m/s, "
          f"max {f['streamwise_max_m_s']:.4g} m/s")
    print(f"  secondary max {f['secondary_max_m_s']:.4g} m/s, mean {f['secondary_mean_m_s']:.4g} m/s "
          f"({f['secondary_mean_over_streamwise_mean']:.3g} of the mean streamwise speed)")
    for k, v in enumerate(f["vortices"][:4], start=1):
        print(f"  vortex {k}: u = {v['u_m'] * 1e6:+.2f} um, z = {v['v_m'] * 1e6:+.2f} um, {v['sense']} (looking downstream)")
    cen = f["centring"]
    print(f"  centring: grid centroid {cen['grid_centroid_to_centreline_point_m']:.2e} m from the centreline point, "
          f"plane normal {cen['plane_normal_to_tangent_rad']:.2e} rad from the tangent")
    print(f"wrote {', '.join(p.name for p in files)} in {out}")
    return 0
