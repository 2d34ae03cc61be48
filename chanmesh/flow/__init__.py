"""Fully developed laminar flow of a channel's own cross-section, straight or bent at radius R.

The exact toroidal problem (steady axisymmetric Navier-Stokes with swirl; no small-curvature
approximation) on a section grid, by Newton with continuation in the flow rate: streamwise
profile, driving pressure gradient, secondary (Dean) flow and its vortex cells. numpy, scipy
and scikit-fem only (no gmsh). See docs/dean.md.
"""

from chanmesh.flow.grid import SectionGrid, default_grid, structured_grid
from chanmesh.flow.result import SectionFlow
from chanmesh.flow.solve import FlowNotConverged, flow_range, solve_section_flow

__all__ = ["SectionGrid", "SectionFlow", "FlowNotConverged", "default_grid", "structured_grid", "flow_range",
           "solve_section_flow"]
