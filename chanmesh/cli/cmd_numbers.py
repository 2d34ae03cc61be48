"""``chanmesh numbers DESIGN``: the design numbers that decide whether a channel focuses and
sorts at a given flow (Reynolds, Dean, secondary flow, particle focusing, pressure drop)."""

from __future__ import annotations

import argparse
import dataclasses
from typing import Any

from chanmesh.errors import DesignError
from chanmesh.units import parse_flow_rate, parse_length, parse_temperature, parse_velocity, split_quantity
from chanmesh.cli.argtypes import finite_float

NAME = "numbers"
HELP = "print Reynolds and Dean numbers, focusing estimates and pressure drop of a design at a flow"
ORDER = 30

_VISCOSITY_UNITS = {"": 1.0, "pa.s": 1.0, "pas": 1.0, "pa s": 1.0, "mpa.s": 1e-3, "mpas": 1e-3, "mpa s": 1e-3, "cp": 1e-3}
_DENSITY_UNITS = {"": 1.0, "kg/m3": 1.0, "g/ml": 1e3, "g/cm3": 1e3}


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("design", metavar="DESIGN", help="design file (TOML)")
    rate = parser.add_mutually_exclusive_group()
    rate.add_argument("--flow", metavar="RATE", help="volumetric flow rate with unit, e.g. 1.2mL/min or 300uL/min")
    rate.add_argument("--velocity", metavar="U", help="mean velocity with unit, e.g. 0.3m/s")
    parser.add_argument("--fluid", help="fluid name (default water; other fluids need --density and --viscosity)")
    parser.add_argument("--temperature", metavar="T", help="temperature, e.g. 25C or 310K (plain number: C)")
    parser.add_argument("--density", metavar="RHO", help="density, kg/m3 (or with unit g/mL)")
    parser.add_argument("--viscosity", metavar="MU", help="dynamic viscosity, Pa.s (or with unit mPa.s, cP)")
    parser.add_argument("--particles", metavar="SIZES", help="particle diameters with unit, comma separated, e.g. 7um,15um")
    parser.add_argument("--lift-coefficient", type=finite_float, metavar="F_L", help="lift coefficient f_L (default 0.5)")
    parser.add_argument("--focus-ratio", type=finite_float, metavar="X", help="F_L/F_D also needed to call a particle focusing (default: not applied)")
    parser.add_argument("--dean-low", type=finite_float, metavar="DE", help="lower Dean band edge (default 1)")
    parser.add_argument("--dean-high", type=finite_float, metavar="DE", help="upper Dean band edge (default 30)")
    parser.add_argument("--biological", action=argparse.BooleanOptionalAction, default=None,
                        help="the fluid is a biological sample (default: guessed from the fluid name)")
    parser.add_argument("--json", metavar="PATH", help="also write the numbers as JSON (SI units) to PATH")
    parser.add_argument("--section-flow", action=argparse.BooleanOptionalAction, default=True,
                        help="solve the fully developed section flow at the first Dean station (a few tenths of a second; default on)")


def _with_unit(key: str, text: str, table: dict[str, float], example: str) -> float:
    number, unit = split_quantity(key, text)
    factor = table.get(unit.strip().lower())
    if factor is None:
        known = ", ".join(u for u in table if u) or "none"
        raise DesignError(key, text, f"unknown unit {unit!r}; use a plain number or one of {known} (e.g. {example!r})")
    return number * factor


def _temperature(text: str) -> float:
    number, unit = split_quantity("--temperature", text)
    return number + 273.15 if unit == "" else parse_temperature("--temperature", text)


def overrides(args: argparse.Namespace) -> dict[str, Any]:
    """FlowSpec fields set on the command line (these override the design's [flow] table)."""
    out: dict[str, Any] = {}
    if args.flow is not None:
        out.update(rate=parse_flow_rate("--flow", args.flow), velocity=None)
    if args.velocity is not None:
        out.update(velocity=parse_velocity("--velocity", args.velocity), rate=None)
    if args.fluid is not None:
        out["fluid"] = args.fluid
        if args.density is None and args.viscosity is None:
            out.update(density=None, viscosity=None)  # a new fluid name drops the file's properties
    if args.temperature is not None:
        out["temperature"] = _temperature(args.temperature)
    if args.density is not None:
        out["density"] = _with_unit("--density", args.density, _DENSITY_UNITS, "998kg/m3")
    if args.viscosity is not None:
        out["viscosity"] = _with_unit("--viscosity", args.viscosity, _VISCOSITY_UNITS, "1mPa.s")
    if args.particles is not None:
        parts = [p for p in args.particles.split(",") if p.strip()]
        out["particles"] = tuple(parse_length(f"--particles[{i}]", p) for i, p in enumerate(parts))
    for field in ("lift_coefficient", "focus_ratio", "dean_low", "dean_high", "biological"):
        if getattr(args, field) is not None:  # option dest names equal the FlowSpec fields
            out[field] = getattr(args, field)
    return out


def run(args: argparse.Namespace) -> int:
    from chanmesh.design.load import load_design
    from chanmesh.numbers import design_numbers, render, write_json

    design = load_design(args.design)
    flow = dataclasses.replace(design.flow, **overrides(args))
    if flow.rate is None and flow.velocity is None:
        from chanmesh.errors import MISSING, DesignError

        raise DesignError("flow.rate", MISSING, "give --flow (e.g. 1.2mL/min) or --velocity (e.g. 0.3m/s), "
                          "or flow.rate / flow.velocity in the design's [flow] table")
    numbers = design_numbers(design, flow)
    if args.section_flow:
        from chanmesh.numbers.section_flow import section_flow_numbers

        numbers["section_flow"] = section_flow_numbers(design, flow)
    print(render(numbers), end="")
    if args.json:
        path = write_json(numbers, args.json)
        print(f"wrote {path}")
    return 0
