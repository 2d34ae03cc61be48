"""Section flow of a design at a station: the station's exact section and local radius of
curvature, the design's fluid, and the flow rate from the design or the command line.

The radius is the centreline's own local radius of curvature at the station (an arc's R; a
spiral's 1/kappa, slightly smaller than its distance from the centre; a serpentine U-turn's R),
signed by the turn: a right turn puts the centre of curvature on the u > 0 side. A straight
station (a lead, a serpentine's straight run, a chamber design) gives the straight duct.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from chanmesh.design.model import Design, FlowSpec
from chanmesh.errors import MISSING, DesignError
from chanmesh.flow.grid import SectionGrid, default_grid
from chanmesh.flow.result import SectionFlow
from chanmesh.flow.solve import flow_range, solve_section_flow
from chanmesh.geometry.section import SectionShape
from chanmesh.geometry.stations import StationFrame, station_frame
from chanmesh.numbers.fluid import Fluid, fluid_of
from chanmesh.numbers.regime import dean_velocity
from chanmesh.units import parse_flow_rate, parse_velocity


@dataclass(frozen=True)
class StationProblem:
    """Everything the solver needs at one station, SI."""

    frame: StationFrame
    shape: SectionShape  # the section at the station, centred on its own mid-width
    offset: float  # u of the section's mid-width in the station frame (0 except one-sided chambers)
    radius: float | None  # signed; None on a straight
    fluid: Fluid

    @property
    def wall_names(self) -> tuple[str, str]:
        """Names of the walls at u = -w/2 and u = +w/2."""
        if self.radius is None:
            return "left wall", "right wall"
        return ("inner wall", "outer wall") if self.radius > 0 else ("outer wall", "inner wall")


def station_problem(design: Design, at: Any, flow: FlowSpec, key: str = "--at") -> StationProblem:
    """The problem at station ``at`` of ``design`` (``key`` names the option in errors)."""
    return problem_at(station_frame(design, at, key), flow)


def problem_at(frame: StationFrame, flow: FlowSpec) -> StationProblem:
    """The problem at a station already located: its exact section, signed radius and fluid."""
    o = frame.outline
    shape = SectionShape(o.u1 - o.u0, o.top0 - o.bottom, o.top1 - o.bottom)
    radius = None if math.isinf(frame.curvature_radius) else 1.0 / frame.curvature
    return StationProblem(frame, shape, 0.5 * (o.u0 + o.u1), radius, fluid_of(flow))


def flow_rate_of(flow: FlowSpec, area: float) -> float:
    """m^3/s from the operating point's rate or mean velocity over ``area``."""
    if flow.rate is None and flow.velocity is None:
        raise DesignError("flow.rate", MISSING, "give --flow (e.g. 1.2mL/min), --velocity (e.g. 0.3m/s) or [flow] rate "
                          "in the design")
    q = flow.rate if flow.rate is not None else flow.velocity * area  # type: ignore[operator]
    if not (math.isfinite(q) and q > 0):
        raise DesignError("flow.rate", f"{q * 6e7:g} mL/min", "must be greater than 0")
    return float(q)


def parse_range(key: str, text: str, area: float) -> list[float] | None:
    """``'0.2mL/min:2mL/min:12'`` (or velocities) as flow rates in m^3/s; None when ``text`` is one value."""
    parts = text.split(":")
    if len(parts) == 1:
        return None
    if len(parts) != 3:
        raise DesignError(key, text, "a range is FIRST:LAST:COUNT, e.g. 0.2mL/min:2mL/min:12")
    try:
        count = int(parts[2])
    except ValueError:
        raise DesignError(key, text, "the count after the second ':' must be a whole number in [2, 200]") from None
    if not 2 <= count <= 200:
        raise DesignError(key, text, "the count after the second ':' must be a whole number in [2, 200]")
    if key == "--velocity":
        lo, hi = (parse_velocity(key, p) * area for p in parts[:2])
    else:
        lo, hi = (parse_flow_rate(key, p) for p in parts[:2])
    if not 0 < lo < hi:
        raise DesignError(key, text, "needs 0 < FIRST < LAST")
    return [float(q) for q in np.linspace(lo, hi, count)]


def solve_station(problem: StationProblem, rate: float, grid: SectionGrid | None = None,
                  estimate_error: bool | None = None, branch: str = "primary") -> SectionFlow:
    return solve_section_flow(problem.shape, problem.radius, problem.fluid.density, problem.fluid.viscosity, rate,
                              grid=grid, estimate_error=estimate_error, branch=branch)


def solve_station_range(problem: StationProblem, rates: Sequence[float], grid: SectionGrid | None = None,
                        branch: str = "primary") -> list[SectionFlow]:
    return flow_range(problem.shape, problem.radius, problem.fluid.density, problem.fluid.viscosity, rates, grid=grid,
                      branch=branch)


def grid_for(problem: StationProblem, cells_across: int | None, cells_high: int | None) -> SectionGrid | None:
    if cells_across is None and cells_high is None:
        return None
    return default_grid(problem.shape, cells_across, cells_high)


def correlation_comparison(flow: SectionFlow) -> dict[str, Any] | None:
    """The computed secondary speeds beside the Ookawara et al. (2004) correlation, named as such."""
    if flow.dean is None:
        return None
    u_corr = dean_velocity(flow.dean)
    return {
        "computed_secondary_max_m_s": flow.secondary_max,
        "computed_secondary_mean_m_s": flow.secondary_mean,
        "correlation_dean_velocity_m_s": u_corr,
        "correlation": "U_Dean = 1.8e-4 De^1.63 m/s, Ookawara et al. (2004), empirical",
        "correlation_over_computed_mean": u_corr / flow.secondary_mean if flow.secondary_mean else None,
        "correlation_over_computed_max": u_corr / flow.secondary_max if flow.secondary_max else None,
    }
