"""``chanmesh stations DESIGN [--at ...]``: the exact centreline frame at each station, with the
local radius of curvature and the Dean number there when a flow is known."""

from __future__ import annotations

import argparse
import dataclasses
import json
import math
from pathlib import Path
from typing import TYPE_CHECKING, Any

from chanmesh.design.model import Design, FlowSpec
from chanmesh.errors import DesignError
from chanmesh.units import parse_flow_rate, parse_velocity

if TYPE_CHECKING:
    from chanmesh.geometry.stations import StationFrame

NAME = "stations"
HELP = "list the centreline point, tangent and section frame (and Dean number) at stations"
ORDER = 20


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML)")
    p.add_argument("--at", action="append", metavar="STATION",
                   help="station: fraction (0.5), arc length (12.5mm), angle (90deg) or turn=2.25; "
                        "repeat for several (default: the design's mesh.sections, else 0, 0.25, 0.5, 0.75, 1)")
    rate = p.add_mutually_exclusive_group()
    rate.add_argument("--flow", metavar="RATE", help="flow rate for the Dean number, e.g. 1.2mL/min")
    rate.add_argument("--velocity", metavar="U", help="mean velocity for the Dean number, e.g. 0.3m/s")
    p.add_argument("--json", type=Path, metavar="PATH", help="also write the stations as JSON (SI units)")


def _flow(design: Design, args: argparse.Namespace) -> FlowSpec:
    if args.flow is not None:
        return dataclasses.replace(design.flow, rate=parse_flow_rate("--flow", args.flow), velocity=None)
    if args.velocity is not None:
        return dataclasses.replace(design.flow, velocity=parse_velocity("--velocity", args.velocity), rate=None)
    return design.flow


def dean_numbers(design: Design, flow: FlowSpec, frames: list[StationFrame]) -> list[float | None] | None:
    """De = Re sqrt(D_h / (2 R)) at each station (None on straights); None without a flow."""
    from chanmesh.numbers import design_numbers
    from chanmesh.numbers.regime import dean_number

    if flow.rate is None and flow.velocity is None:
        return None
    numbers = design_numbers(design, flow)
    re = float(numbers["flow"]["reynolds"])
    d_h = float(numbers["section"]["hydraulic_diameter_m"])
    return [None if math.isinf(f.curvature_radius) else dean_number(re, d_h, f.curvature_radius) for f in frames]


def _vec(v: Any) -> str:
    return "(" + ", ".join(f"{x:+.6f}" for x in v) + ")"


def run(args: argparse.Namespace) -> int:
    from chanmesh.design.load import load_design
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.numbers.regime import DEAN_DEFINITION
    from chanmesh.geometry.stations import station_frame
    from chanmesh.safeio import atomic_write_text

    design = load_design(args.design)
    line = centerline_of(design)
    if args.at:
        specs: list[Any] = list(args.at)
        keys = [f"--at[{i}]" if len(specs) > 1 else "--at" for i in range(len(specs))]
    elif design.mesh.sections:
        specs = list(design.mesh.sections)
        keys = [f"mesh.sections[{i}]" for i in range(len(specs))]
    else:
        specs, keys = [0.0, 0.25, 0.5, 0.75, 1.0], ["--at"] * 5
    frames = [station_frame(design, raw, key, line) for raw, key in zip(specs, keys)]
    deans = dean_numbers(design, _flow(design, args), frames)
    print(f"Stations of {design.name} ({design.path.kind}); centreline length {line.length * 1e3:.6g} mm")
    print("frame: t tangent, n = t x z (u > 0 side, right looking downstream), z up; lengths in mm")
    rows = []
    for k, f in enumerate(frames):
        r = f.curvature_radius
        de = None if deans is None else deans[k]
        print(f"\n[{k + 1}] {f.label}: s = {f.s * 1e3:.6g} mm (fraction {f.fraction:.6g}), on a {f.segment}")
        print(f"    point   {_vec(f.point * 1e3)}")
        print(f"    t       {_vec(f.tangent)}")
        print(f"    n       {_vec(f.normal)}")
        print(f"    outward {_vec(f.outward) if f.outward is not None else '(straight)'}  away from the centre of curvature")
        print(f"    R       {'inf (straight)' if math.isinf(r) else f'{r * 1e3:.6g} mm'};  u = -w/2 is the {f.u_minus_side}")
        if deans is not None:
            print(f"    Dean    {'-' if de is None else f'{de:.4g}'}")
        rows.append({**f.to_dict(), "dean": de})
    if deans is None:
        print("\n(no Dean numbers: give --flow or --velocity, or flow.rate in the design)")
    else:
        print(f"\n{DEAN_DEFINITION}")
    if args.json:
        data = {"design": design.name, "centreline_length_m": line.length, "dean_definition": DEAN_DEFINITION, "stations": rows}
        atomic_write_text(args.json, json.dumps(data, indent=2) + "\n")
        print(f"wrote {args.json}")
    return 0
