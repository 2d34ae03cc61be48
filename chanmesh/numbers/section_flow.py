"""The computed secondary (Dean) flow at a design's first Dean station, for ``numbers`` and the
manifest, beside the Ookawara et al. (2004) correlation and labelled so the two are not confused.

One solve of ``chanmesh.flow`` on the default section grid (a few tenths of a second, most of it
importing scipy and scikit-fem), at the first station of ``regime.stations_of`` (the arc's bend,
the spiral's start, the first U-turn); None when the design has no flow or no curved station
(chambers).
"""

from __future__ import annotations

from typing import Any

from chanmesh.design.model import Design, FlowSpec
from chanmesh.errors import ChanmeshError
from chanmesh.geometry.section import SectionShape
from chanmesh.numbers import regime
from chanmesh.numbers.fluid import fluid_of

WHICH = {
    "computed": "chanmesh's fully developed section-flow solve (exact toroidal equations, P2-P1, default grid; "
                "see docs/dean.md)",
    "correlation": "U_Dean = 1.8e-4 De^1.63 m/s, empirical correlation of Ookawara et al. (2004)",
}


def section_flow_numbers(design: Design, flow: FlowSpec | None = None) -> dict[str, Any] | None:
    """Computed secondary speeds at the first Dean station, or None (no flow, no curved station)."""
    from chanmesh.flow import solve_section_flow

    flow = design.flow if flow is None else flow
    stations = regime.stations_of(design)
    if not stations or (flow.rate is None and flow.velocity is None):
        return None
    st = stations[0]
    shape = SectionShape.of(design.section)
    rate = flow.rate if flow.rate is not None else flow.velocity * shape.area  # type: ignore[operator]
    fluid = fluid_of(flow)
    radius = -st.curvature_radius if st.side == "right" else st.curvature_radius
    try:
        f = solve_section_flow(shape, radius, fluid.density, fluid.viscosity, float(rate), estimate_error=False)
    except ChanmeshError as exc:
        return {"station": st.label, "skipped": str(exc)}
    u_corr = regime.dean_velocity(f.dean or 0.0)
    return {
        "station": st.label,
        "curvature_radius_m": st.curvature_radius,
        "dean": f.dean,
        "computed_secondary_max_m_s": f.secondary_max,
        "computed_secondary_mean_m_s": f.secondary_mean,
        "correlation_dean_velocity_m_s": u_corr,
        "correlation_over_computed_mean": u_corr / f.secondary_mean if f.secondary_mean else None,
        "computed_vortex_cells": f.cell_count,
        "computed_dpds_ratio": f.dpds_ratio,
        "computed_u_of_streamwise_max_m": f.u_of_streamwise_max,
        "grid": f.grid["description"],
        "which": WHICH,
        "caution": "fully developed flow: not reached in short bends, U-turns, chambers or entrance regions",
    }
