"""Assemble the design numbers of one design at one operating point as plain, JSON-able data.

Everything in the returned dict is SI and every key names its unit (``_m``, ``_Pa``, ...).
``definitions``, ``sources`` and ``cautions`` travel with the numbers so that a manifest read
alone still says what each number means and how far to trust it.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from typing import Any

from chanmesh.design.model import ChambersPath, Design, FlowSpec, SpiralPiece
from chanmesh.errors import MISSING, DesignError
from chanmesh.geometry.centerline import centerline_of, pieces_of
from chanmesh.geometry.section import SectionShape
from chanmesh.numbers import duct, particles, regime
from chanmesh.numbers.fluid import Fluid, fluid_of

SCHEMA = "chanmesh.numbers/1"
PSI = 6894.757293168  # Pa per pound-force per square inch

CAUTION_NEWTONIAN = (
    "All numbers assume a Newtonian, particle-free fluid in steady laminar flow. Blood and cell "
    "suspensions are non-Newtonian and particle-laden; treat the numbers as a first estimate for them."
)
CAUTION_BIOSAFETY = (
    "The fluid is named as a biological sample: handle it under the biosafety practice and the "
    "local rules that apply to it (containment, waste, training)."
)
CAUTION_PRESSURE = (
    "Bonded chips have pressure limits that depend on their materials and bonding; check the "
    "pressure drop (plus any back pressure at the outlets) against the fabricator's data."
)
CAUTION_VALIDATION = (
    "These are design estimates from correlations; they and any simulation do not replace "
    "experimental validation of the device."
)


def _operating_point(flow: FlowSpec, area: float) -> tuple[float, float]:
    """(flow rate m^3/s, mean velocity m/s) from whichever of the two is given."""
    if flow.rate is None and flow.velocity is None:
        raise DesignError("flow.rate", MISSING, "give a flow rate (e.g. '1.2mL/min') or flow.velocity (e.g. '0.3m/s')")
    if flow.rate is not None and flow.velocity is not None:
        raise DesignError("flow.velocity", f"{flow.velocity:g} m/s", "give flow.rate or flow.velocity, not both")
    if flow.rate is not None:
        if not flow.rate > 0 or not math.isfinite(flow.rate):
            raise DesignError("flow.rate", f"{flow.rate * 6e7:.6g} mL/min", "must be greater than 0")
        return flow.rate, flow.rate / area
    if not flow.velocity > 0 or not math.isfinite(flow.velocity):  # type: ignore[operator]
        raise DesignError("flow.velocity", f"{flow.velocity:g} m/s", "must be greater than 0")
    return flow.velocity * area, flow.velocity  # type: ignore[operator]


def _check_flow(flow: FlowSpec) -> None:
    if not flow.lift_coefficient > 0:
        raise DesignError("flow.lift_coefficient", flow.lift_coefficient, "must be greater than 0 (default 0.5)")
    if flow.focus_ratio is not None and not flow.focus_ratio > 0:
        raise DesignError("flow.focus_ratio", flow.focus_ratio, "must be greater than 0 (or left out)")
    if not 0 <= flow.dean_low < flow.dean_high:
        raise DesignError(
            "flow.dean_low",
            flow.dean_low,
            f"must be 0 or more and below flow.dean_high = {flow.dean_high:g} (defaults 1 and 30)",
        )


def _duct(width: float, height: float, fluid: Fluid, rate: float) -> dict[str, float]:
    """Velocity, Reynolds number and friction of a width x height rectangle carrying ``rate``."""
    area = width * height
    d_h = 2.0 * width * height / (width + height)
    alpha = duct.aspect_ratio(width, height)
    u = rate / area
    re = fluid.density * u * d_h / fluid.viscosity
    return {
        "area_m2": area,
        "hydraulic_diameter_m": d_h,
        "aspect_ratio": alpha,
        "mean_velocity_m_s": u,
        "reynolds": re,
        "fanning_fRe": duct.fanning_fre_series(alpha),
    }


def inlet_shares(design: Design, rate: float) -> list[dict[str, Any]]:
    """Each inlet piece's area and share of the flow ``rate`` (m^3/s) when every piece carries
    the same mean velocity (as the OpenFOAM case prescribes): share = piece area / section
    area, the piece spanning its fractions of the width from u = -w/2 under the section's top."""
    shape = SectionShape.of(design.section)
    edges = -0.5 * shape.width + shape.width * np.cumsum((0.0,) + tuple(design.inlets.split))
    rows = []
    for name, a, b in zip(design.inlets.names, edges[:-1], edges[1:]):
        mean_height = 0.5 * (float(shape.top(a)) + float(shape.top(b))) - shape.bottom  # straight top: trapezoid rule exact
        area = (b - a) * mean_height
        rows.append({"name": name, "width_fraction": (b - a) / shape.width, "area_m2": area,
                     "share": area / shape.area, "rate_m3_s": rate * area / shape.area,
                     "mean_velocity_m_s": rate / shape.area})
    return rows


def design_numbers(design: Design, flow: FlowSpec | None = None) -> dict[str, Any]:
    """The design numbers of ``design`` at ``flow`` (default: the design's own [flow] table)."""
    flow = design.flow if flow is None else flow
    _check_flow(flow)
    fluid = fluid_of(flow)
    shape = SectionShape.of(design.section)
    area, perimeter, d_h = shape.area, shape.perimeter, shape.hydraulic_diameter
    rate, u_mean = _operating_point(flow, area)
    particles.check_particles(flow.particles, min(shape.h_inner, shape.h_outer))

    # friction and peak velocity: rectangle of the mean height (exact for a rectangle)
    alpha = duct.aspect_ratio(shape.width, shape.mean_height)
    fre = duct.fanning_fre_series(alpha)
    u_max = duct.max_over_mean(alpha) * u_mean
    re = fluid.density * u_mean * d_h / fluid.viscosity
    line = centerline_of(design)

    out: dict[str, Any] = {
        "schema": SCHEMA,
        "design": design.name,
        "path_kind": design.path.kind,
        "fluid": fluid.to_dict(),
        "section": {
            "shape": design.section.shape,
            "width_m": shape.width,
            "height_inner_m": shape.h_inner,
            "height_outer_m": shape.h_outer,
            "area_m2": area,
            "wetted_perimeter_m": perimeter,
            "hydraulic_diameter_m": d_h,
            "aspect_ratio": alpha,
        },
        "flow": {
            "rate_m3_s": rate,
            "mean_velocity_m_s": u_mean,
            "max_velocity_m_s": u_max,
            "max_over_mean": u_max / u_mean,
            "reynolds": re,
        },
    }
    out["inlets"] = inlet_shares(design, rate) if len(design.inlets.split) > 1 else None

    stations = regime.stations_of(design)
    out["dean"] = None
    u_deans: list[tuple[str, float]] = []
    if stations:
        rows = [regime.station_numbers(st, re, d_h, flow.dean_low, flow.dean_high) for st in stations]
        out["dean"] = {
            "definition": regime.DEAN_DEFINITION,
            "band_low": flow.dean_low,
            "band_high": flow.dean_high,
            "stations": rows,
        }
        u_deans = [(str(r["label"]), float(r["dean_velocity_m_s"])) for r in rows]  # type: ignore[arg-type]

    length = line.length
    dp = duct.pressure_drop(fre, fluid.viscosity, u_mean, length, d_h)
    out["chambers"] = None
    if isinstance(design.path, ChambersPath):
        p = design.path
        throat = _duct(shape.width, shape.mean_height, fluid, rate)
        chamber = _duct(p.chamber_width, shape.mean_height, fluid, rate)
        chamber_length = p.count * p.chamber_length
        throat_length = length - chamber_length
        dp = duct.pressure_drop(throat["fanning_fRe"], fluid.viscosity, throat["mean_velocity_m_s"], throat_length,
                                throat["hydraulic_diameter_m"])
        dp += duct.pressure_drop(chamber["fanning_fRe"], fluid.viscosity, chamber["mean_velocity_m_s"], chamber_length,
                                 chamber["hydraulic_diameter_m"])
        out["chambers"] = {
            "expansion_ratio": p.chamber_width / shape.width,
            "throat": throat,
            "chamber": chamber,
        }

    out["particles"] = [
        particles.particle_numbers(
            a,
            density=fluid.density,
            viscosity=fluid.viscosity,
            max_velocity=u_max,
            hydraulic_diameter=d_h,
            lift_coefficient=flow.lift_coefficient,
            focus_ratio=flow.focus_ratio,
            dean_velocities=u_deans,
        )
        for a in flow.particles
    ]
    out["pressure"] = {
        "length_m": length,
        "fanning_fRe": fre,
        "fanning_fRe_polynomial": duct.fanning_fre_polynomial(alpha),
        "drop_Pa": dp,
        "drop_kPa": dp / 1e3,
        "drop_psi": dp / PSI,
        "hydraulic_resistance_Pa_s_m3": dp / rate,
        "entrance_length_m": duct.entrance_length(re, d_h),
    }
    out["inputs"] = {**dataclasses.asdict(flow), "particles": list(flow.particles)}
    out["definitions"] = _definitions(design)
    out["sources"] = _sources(design)
    out["cautions"] = _cautions(fluid)
    return _json_safe(out)


def _definitions(design: Design) -> dict[str, str]:
    d = {
        "hydraulic_diameter": "D_h = 4 A / P (A section area, P wetted perimeter); 2 w h / (w + h) for a rectangle",
        "reynolds": "Re = rho U D_h / mu with U the mean velocity Q / A",
        "max_velocity": "peak of the fully developed laminar profile (Fourier series of the rectangular duct)",
        "dean": regime.DEAN_DEFINITION + "; " + regime.DEAN_ALTERNATIVE,
        "dean_velocity": regime.DEAN_VELOCITY_SOURCE,
        "regime": regime.REGIME_SOURCE,
        "confinement": "a / D_h, a the particle diameter",
        "lift": particles.LIFT_SOURCE,
        "dean_drag": particles.DRAG_SOURCE,
        "verdict": particles.VERDICT_SOURCE,
        "pressure_drop": (
            "dp = 2 (f Re) mu U L / D_h^2 with the Fanning f Re (= (f_D Re) mu U L / (2 D_h^2) with Darcy f_D = 4 f), "
            "fully developed laminar flow along the centreline length L; bends, entrance and "
            "expansion/contraction losses are not included"
        ),
        "entrance_length": "L_e / D_h = 0.60 / (1 + 0.035 Re) + 0.056 Re (Chen 1973, from memory)",
    }
    if design.section.shape == "trapezoid":
        d["trapezoid"] = (
            "f Re and the peak velocity of a trapezoid use the rectangle of its mean height (an "
            "approximation for gentle slopes, no source); area, perimeter and D_h are exact"
        )
    if any(isinstance(p, SpiralPiece) for p in pieces_of(design.path)[2]):
        d["spiral_stations"] = (
            "one station at the start, each whole turn and the end; radius_m is r = r0 + c theta "
            "from the centre, curvature_radius_m is 1 / kappa (slightly smaller than r)"
        )
    d["inner_wall"] = (
        "per bend: the section wall nearer the centre of curvature, u = -w/2 where the path turns left "
        "(counter-clockwise seen from +z), u = +w/2 where it turns right; bend = curved piece number from the inlet"
    )
    if isinstance(design.path, ChambersPath):
        d["chambers"] = "straight: no Dean number; expansion ratio = chamber_width / width; Re in throat and chamber"
    return d


def _sources(design: Design) -> list[str]:
    return [
        "Shah R.K., London A.L. (1978) Laminar Flow Forced Convection in Ducts: f Re of rectangular ducts",
        "Wagner W., Pruss A. (2002) IAPWS-95 formulation; Huber M.L. et al. (2009) IAPWS 2008 viscosity "
        "(IAPWS R6-95 and R12-08, evaluated by chanmesh.numbers.water and tested against the iapws package)",
        "Ookawara S. et al. (2004): U_Dean = 1.8e-4 De^1.63 m/s, empirical correlation",
        "Di Carlo D. (2009) Inertial microfluidics, Lab Chip 9, 3038: a / D_h >= 0.07, F_L scaling",
        "Chen R.Y. (1973) entrance length correlation (from memory)",
    ]


def _cautions(fluid: Fluid) -> list[str]:
    out = [CAUTION_NEWTONIAN]
    if fluid.biological:
        out.append(CAUTION_BIOSAFETY)
    out += [CAUTION_PRESSURE, CAUTION_VALIDATION,
            "Regime bands are common practice, not a published limit; override flow.dean_low / flow.dean_high."]
    return out


def _json_safe(obj: Any) -> Any:
    """Plain Python floats/bools/lists only, non-finite floats as None (standard JSON)."""
    if isinstance(obj, dict):
        return {k: _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_json_safe(v) for v in obj]
    if isinstance(obj, bool) or obj is None or isinstance(obj, (str, int)):
        return obj
    if isinstance(obj, float) or hasattr(obj, "__float__"):
        f = float(obj)
        return f if math.isfinite(f) else None
    return obj
