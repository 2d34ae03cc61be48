"""Why a mesh is as large as it is: the cell count split by the key that drives it.

Used by the ``mesh.max_cells`` refusal so that the message names the cause (core cells from
``cells_across``/``cells_high``, wall layers from ``first_cell``/``wall_ratio``, layers along
from ``along_aspect``/``cells_along``) instead of only the total.
"""

from __future__ import annotations

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.sizing import Grading, grading_of


def _wall_layers(nodes: np.ndarray, core: float) -> int:
    """Cells of a 1D node row smaller than the core (the wall layers, both walls)."""
    return int(np.sum(np.diff(nodes) < 0.98 * core))


def hex_breakdown(design: Design, scale: float = 1.0) -> tuple[str, int, int, int]:
    """'52 across (20 of them wall layers) x 18 high (...) x 377 along' for the hexahedral
    plan, with the wall-layer and core cells across plus high, and the layers along."""
    from chanmesh.meshing.hexplan import plan_hex

    plan = plan_hex(design, scale)
    g = plan.grading
    nk, ni, nj = plan.shape
    H = design.section.height
    wall_a = _wall_layers(plan.u[plan.band[0]:plan.band[1] + 1], g.h_core)
    wall_h = _wall_layers(plan.eta * H, g.h_core_high or g.h_core)
    return (f"{ni} across ({wall_a} of them wall layers) x {nj} high ({wall_h} wall layers) x {nk} along; "
            f"core cell {g.h_core * 1e6:.3g} x {(g.h_core_high or g.h_core) * 1e6:.3g} um, wall-adjacent cell "
            f"{g.h_wall * 1e6:.3g} um, growth {g.ratio:.3g}"), wall_a + wall_h, ni + nj - wall_a - wall_h, nk


def _tet_breakdown(design: Design, scale: float) -> tuple[str, float]:
    """Share of the tetrahedral estimate that the wall layers add."""
    from chanmesh.gmshlayer.background import size_grid

    g = grading_of(design, scale)
    full = size_grid(design, g).estimate_tets()
    core_only = size_grid(design, Grading(g.h_core_min, 1.0, g.h_core, g.h_core_high)).estimate_tets()
    share = max(0.0, 1.0 - core_only / full) if full > 0 else 0.0
    text = (f"core cell {g.h_core_min * 1e6:.3g} um gives {core_only:,.0f} of them, the wall layers "
            f"(wall-adjacent cell {g.h_wall * 1e6:.3g} um, growth {g.ratio:.3g}) the rest")
    return text, share


def too_many_cells(design: Design, estimate: int, scale: float = 1.0) -> DesignError:
    """The ``mesh.max_cells`` refusal, naming the key that drives the count."""
    kind = design.mesh.cells
    if kind == "hex":
        text, wall, core, along = hex_breakdown(design, scale)
        if along > 4 * (wall + core):
            driver = "cells along the flow drive it: raise mesh.along_aspect or give a smaller mesh.cells_along"
        elif wall > core:
            driver = "the wall layers drive it: a larger mesh.first_cell or a larger mesh.wall_ratio"
        else:
            driver = "the core cells drive it: fewer mesh.cells_across / mesh.cells_high"
    else:
        text, share = _tet_breakdown(design, scale)
        if share > 0.5:
            driver = "the wall layers drive it: a larger mesh.first_cell or a larger mesh.wall_ratio"
        else:
            driver = "the core cells drive it: fewer mesh.cells_across / mesh.cells_high"
    scaled = f" at refinement scale {scale:.4g}" if scale != 1.0 else ""
    return DesignError(
        "mesh.max_cells",
        design.mesh.max_cells,
        f"the {kind} mesh{scaled} is estimated at {estimate:,} cells ({text}); {driver}, or raise max_cells",
    )
